#include "check.h"
#include "ink_check.h"
#include "inkreach_config.h"

int main(void)
{
    int32_t q[2] = {INK_HOME_Q1, INK_HOME_Q2}, v[2] = {0, 0}, n[2], val, dist, moved;
    int32_t prev;
    int j, steps;
    /* a sample at the posture is fine; the limits themselves are inside */
    n[0] = q[0]; n[1] = q[1];
    CHECK(ink_check_sample(q, v, n, 0, 1, &val) == INK_F_NONE);
    CHECK(ink_check_sample(q, v, n, 2, 0, &val) == INK_F_PEN && val == 2);
    /* braking distance: v = 2.5 a covers 1.5 a + 0.5 a */
    CHECK(ink_braking_distance(2 * INK_DDQ_MAX) == INK_DDQ_MAX);
    CHECK(ink_braking_distance(INK_DDQ_MAX) == 0);
    CHECK(ink_braking_distance(-3 * INK_DDQ_MAX) == 3 * INK_DDQ_MAX);
    /* the ramp from full speed toward the upper limit: within accel, inside limits,
     * and it covers exactly the braking distance */
    for (j = 0; j < 2; j++) {
        q[0] = INK_HOME_Q1; q[1] = INK_HOME_Q2;
        v[0] = v[1] = 0;
        v[j] = INK_DQ_MAX;
        dist = ink_braking_distance(INK_DQ_MAX);
        moved = q[j];
        steps = 0;
        prev = v[j];
        while (!ink_ramp_step(q, v)) {
            CHECK(prev - v[j] <= INK_DDQ_MAX && prev - v[j] >= 0);
            prev = v[j];
            CHECK(++steps < 10000);
        }
        CHECK(prev <= INK_DDQ_MAX);
        CHECK(q[j] - moved == dist);
    }
    /* the ramp never leaves the limits, even from a state the check would refuse */
    q[0] = INK_Q1_MAX - 10; q[1] = INK_Q2_MIN + 10;
    v[0] = INK_DQ_MAX; v[1] = -INK_DQ_MAX;
    while (!ink_ramp_step(q, v))
        CHECK(q[0] <= INK_Q1_MAX && q[1] >= INK_Q2_MIN);
    CHECK(q[0] <= INK_Q1_MAX && q[1] >= INK_Q2_MIN);
    /* a sample that could not brake before the limit is refused as a limit fault */
    q[0] = INK_Q1_MAX - INK_DQ_MAX; q[1] = INK_HOME_Q2;
    v[0] = INK_DQ_MAX; v[1] = 0;
    n[0] = q[0] + INK_DQ_MAX - INK_DDQ_MAX; n[1] = q[1];
    CHECK(ink_check_sample(q, v, n, 1, 0, &val) == INK_F_LIMIT);
    CHECK(val > INK_Q1_MAX);
    return 0;
}
