/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* Angles to motor signals, integer maths only (64-bit intermediates). */
#include "ink_output.h"
#include "inkreach_config.h"

static const int32_t servo1[INK_SERVO1_POINTS][2] = INK_SERVO1_TABLE;
static const int32_t servo2[INK_SERVO2_POINTS][2] = INK_SERVO2_TABLE;

int64_t ink_div_round(int64_t a, int64_t b)
{
    if (a >= 0)
        return (a + b / 2) / b;
    return -((-a + b / 2) / b);
}

static int32_t interp(const int32_t (*tab)[2], uint8_t n, int32_t q)
{
    uint8_t k = 0;
    int64_t num;
    if (q <= tab[0][0])
        return tab[0][1];
    if (q >= tab[n - 1][0])
        return tab[n - 1][1];
    while ((uint8_t)(k + 2) < n && q >= tab[k + 1][0])
        k++;
    num = (int64_t)(q - tab[k][0]) * (int64_t)(tab[k + 1][1] - tab[k][1]);
    return (int32_t)(tab[k][1] + ink_div_round(num, (int64_t)(tab[k + 1][0] - tab[k][0])));
}

int32_t ink_servo_ticks(uint8_t joint, int32_t q)
{
    return joint == 0 ? interp(servo1, INK_SERVO1_POINTS, q)
                      : interp(servo2, INK_SERVO2_POINTS, q);
}

int32_t ink_pen_ticks(uint8_t pen)
{
    return pen ? INK_PEN_DOWN_TICKS : INK_PEN_UP_TICKS;
}

int32_t ink_stepper_steps(uint8_t joint, int32_t q)
{
    int64_t s;
    if (joint == 0)
        s = ink_div_round((int64_t)(q - INK_STEP1_ZERO) * INK_STEP1_NUM, INK_STEP1_DEN);
    else
        s = ink_div_round((int64_t)(q - INK_STEP2_ZERO) * INK_STEP2_NUM, INK_STEP2_DEN);
    return (int32_t)((joint == 0 ? INK_STEP1_DIR : INK_STEP2_DIR) * s);
}
