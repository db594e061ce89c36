/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* The board's own per-sample safety check and the controlled stop. */
#include "ink_check.h"
#include "ink_output.h"
#include "inkreach_config.h"

static const int32_t lo[2] = {INK_Q1_MIN, INK_Q2_MIN};
static const int32_t hi[2] = {INK_Q1_MAX, INK_Q2_MAX};

static int32_t iabs(int32_t x)
{
    return x < 0 ? -x : x;
}

int32_t ink_braking_distance(int32_t speed)
{
    int64_t s = iabs(speed), m = s / INK_DDQ_MAX;
    return (int32_t)(m * s - (int64_t)INK_DDQ_MAX * m * (m + 1) / 2);
}

uint8_t ink_check_sample(const int32_t q[2], const int32_t v[2], const int32_t q_new[2],
                         uint8_t pen, uint8_t from_rest, int32_t *value)
{
    uint8_t j;
    int32_t d, dd, end;
    *value = 0;
    if (pen > 1) {
        *value = pen;
        return INK_F_PEN;
    }
    for (j = 0; j < 2; j++) {
        if (q_new[j] < lo[j] || q_new[j] > hi[j]) {
            *value = q_new[j];
            return INK_F_LIMIT;
        }
    }
    for (j = 0; j < 2; j++) {
        d = q_new[j] - q[j];
        if (iabs(d) > INK_DQ_MAX) {
            *value = d;
            return from_rest ? INK_F_FIRST : INK_F_SPEED;
        }
    }
    for (j = 0; j < 2; j++) {
        dd = (q_new[j] - q[j]) - v[j];
        if (iabs(dd) > INK_DDQ_MAX) {
            *value = dd;
            return from_rest ? INK_F_FIRST : INK_F_ACCEL;
        }
    }
    for (j = 0; j < 2; j++) {
        d = q_new[j] - q[j];
        end = d >= 0 ? q_new[j] + ink_braking_distance(d) : q_new[j] - ink_braking_distance(d);
        if (end < lo[j] || end > hi[j]) {
            *value = end;
            return INK_F_LIMIT;
        }
    }
#if INK_DRIVE == 1
    for (j = 0; j < 2; j++) {
        d = ink_stepper_steps(j, q_new[j]) - ink_stepper_steps(j, q[j]);
        if (iabs(d) > INK_MAX_STEPS_PER_PERIOD) {
            *value = d;
            return INK_F_STEP_RATE;
        }
    }
#endif
    return INK_F_NONE;
}

uint8_t ink_ramp_step(int32_t q[2], int32_t v[2])
{
    uint8_t j;
    for (j = 0; j < 2; j++) {
        if (v[j] > INK_DDQ_MAX)
            v[j] -= INK_DDQ_MAX;
        else if (v[j] < -INK_DDQ_MAX)
            v[j] += INK_DDQ_MAX;
        else
            v[j] = 0;
        q[j] += v[j];
        /* last resort only: the check keeps the braking distance inside the limits */
        if (q[j] < lo[j]) {
            q[j] = lo[j];
            v[j] = 0;
        } else if (q[j] > hi[j]) {
            q[j] = hi[j];
            v[j] = 0;
        }
    }
    return v[0] == 0 && v[1] == 0;
}
