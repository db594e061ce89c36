#include "check.h"
#include "ink_output.h"
#include "inkreach_config.h"

int main(void)
{
    static const int32_t t1[INK_SERVO1_POINTS][2] = INK_SERVO1_TABLE;
    int32_t mid;
    /* rounding: halves away from zero, both signs */
    CHECK(ink_div_round(5, 2) == 3 && ink_div_round(-5, 2) == -3);
    CHECK(ink_div_round(4, 3) == 1 && ink_div_round(-4, 3) == -1);
    CHECK(ink_div_round(0, 7) == 0);
    /* table ends and clamping */
    CHECK(ink_servo_ticks(0, t1[0][0]) == t1[0][1]);
    CHECK(ink_servo_ticks(0, t1[INK_SERVO1_POINTS - 1][0]) == t1[INK_SERVO1_POINTS - 1][1]);
    CHECK(ink_servo_ticks(0, t1[0][0] - 1000) == t1[0][1]);
    /* the middle of the first segment gives the mean pulse (within a tick) */
    mid = (t1[0][0] + t1[1][0]) / 2;
    CHECK(ink_servo_ticks(0, mid) - (t1[0][1] + t1[1][1]) / 2 <= 1);
    CHECK(ink_servo_ticks(0, mid) - (t1[0][1] + t1[1][1]) / 2 >= -1);
    CHECK(ink_pen_ticks(0) == INK_PEN_UP_TICKS && ink_pen_ticks(1) == INK_PEN_DOWN_TICKS);
    /* steppers: the zero angle is step 0, one revolution is NUM/DEN * 3.6e6 steps */
    CHECK(ink_stepper_steps(0, INK_STEP1_ZERO) == 0);
    CHECK(ink_stepper_steps(1, INK_STEP2_ZERO + 3600000L)
          == INK_STEP2_DIR * (int32_t)(3600000LL * INK_STEP2_NUM / INK_STEP2_DEN));
    return 0;
}
