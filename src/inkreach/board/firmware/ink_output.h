/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_OUTPUT_H
#define INK_OUTPUT_H
#include <stdint.h>
#ifdef __cplusplus
extern "C" {
#endif
/* a / b rounded to nearest, halves away from zero (b > 0) */
int64_t ink_div_round(int64_t a, int64_t b);
/* Servo pulse of joint 0 or 1 at angle q (1e-4 degree), in 1/INK_TICKS_PER_US us,
 * by piecewise-linear interpolation of the calibration table (clamped at its ends). */
int32_t ink_servo_ticks(uint8_t joint, int32_t q);
/* Pen servo pulse, same unit: pen 1 = down. */
int32_t ink_pen_ticks(uint8_t pen);
/* Absolute stepper position of joint 0 or 1 at angle q (0 at the zero angle). */
int32_t ink_stepper_steps(uint8_t joint, int32_t q);
#ifdef __cplusplus
}
#endif
#endif
