/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* inkreach_config.h: written by `inkreach firmware` for one arm; do not edit,
 * write it again from the arm file. Angles in 1e-4 degree, pulses in 1/16 us. */
#ifndef INKREACH_CONFIG_H
#define INKREACH_CONFIG_H

#define INK_ARM_NAME "desk five-bar"
#define INK_ARM_HASH 0x19B58902UL
#define INK_DRIVE 0 /* 0 servo, 1 stepper */
#define INK_PERIOD_US 20000UL
#define INK_CAPACITY 64
#define INK_Q1_MIN 300000L
#define INK_Q1_MAX 2100000L
#define INK_Q2_MIN -300000L
#define INK_Q2_MAX 1500000L
#define INK_DQ_MAX 36001L /* largest change per period */
#define INK_DDQ_MAX 6001L /* largest change of that change */
#define INK_HOME_Q1 1200000L
#define INK_HOME_Q2 600000L
#define INK_TICKS_PER_US 16
#define INK_SERVO1_POINTS 2
#define INK_SERVO1_TABLE {{300000L, 8000L}, {2100000L, 40000L}}
#define INK_SERVO2_POINTS 2
#define INK_SERVO2_TABLE {{-300000L, 8000L}, {1500000L, 40000L}}
#define INK_PEN_UP_TICKS 19200L
#define INK_PEN_DOWN_TICKS 27200L
#define INK_STEP1_NUM 1LL
#define INK_STEP1_DEN 1125LL
#define INK_STEP1_ZERO 1200000L
#define INK_STEP1_DIR 1
#define INK_STEP2_NUM 1LL
#define INK_STEP2_DEN 1125LL
#define INK_STEP2_ZERO 600000L
#define INK_STEP2_DIR 1
#define INK_MAX_STEPS_PER_PERIOD 400L
#define INK_PIN_MOTOR1 9
#define INK_PIN_MOTOR2 10
#define INK_PIN_PEN 11

#endif
