/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_CHECK_H
#define INK_CHECK_H
#include <stdint.h>
#ifdef __cplusplus
extern "C" {
#endif
enum {
    INK_F_NONE = 0, INK_F_LIMIT = 1, INK_F_SPEED = 2, INK_F_ACCEL = 3, INK_F_STARVED = 4,
    INK_F_PEN = 5, INK_F_FIRST = 6, INK_F_STEP_RATE = 7
};

/* Check the sample (q_new, pen) about to be executed after the posture q with
 * last change per period v (both 0 change at a start from rest, from_rest = 1).
 * Returns a fault code (0 when the sample is safe) and the offending number in
 * *value: joint limits; |dq| <= INK_DQ_MAX; |dq - v| <= INK_DDQ_MAX; braking from
 * the new sample at INK_DDQ_MAX per period ends inside the limits (code 1); and
 * for steppers |steps change| <= INK_MAX_STEPS_PER_PERIOD (code 7). A breach of
 * speed or acceleration on the first sample from rest is code 6. */
uint8_t ink_check_sample(const int32_t q[2], const int32_t v[2], const int32_t q_new[2],
                         uint8_t pen, uint8_t from_rest, int32_t *value);

/* Distance (angle units) a joint moving |v| per period covers while braking at
 * INK_DDQ_MAX per period to rest. */
int32_t ink_braking_distance(int32_t speed);

/* One period of the controlled stop: each joint's change per period shrinks by
 * up to INK_DDQ_MAX toward zero, and the joint never leaves its limits.
 * Updates q and v; returns 1 when both joints are at rest. */
uint8_t ink_ramp_step(int32_t q[2], int32_t v[2]);
#ifdef __cplusplus
}
#endif
#endif
