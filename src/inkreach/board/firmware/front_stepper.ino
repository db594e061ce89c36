/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* Board front-end for two step/dir stepper drivers and a pen-lift servo.
 *
 * Each period the core gives the next absolute step position of each motor;
 * this loop spreads that period's steps evenly across it (step k of n at
 * (k + 1/2) / n of the period). Pins: INK_PIN_STEP1/DIR1, STEP2/DIR2, the
 * drivers' shared enable (INK_PIN_ENABLE, active low on most drivers: check
 * yours) and the pen servo (INK_PIN_PEN). Line: 115200 baud, 8N1, protocol v1.
 */
#include <Arduino.h>
#include <Servo.h>
#include "inkreach_config.h"
#include "ink_core.h"
#include "ink_output.h"

static struct ink_core core;
static Servo pen_servo;
static uint32_t period_start;
static int32_t pos[2], from[2], target[2];
static const uint8_t step_pin[2] = {INK_PIN_STEP1, INK_PIN_STEP2};
static const uint8_t dir_pin[2] = {INK_PIN_DIR1, INK_PIN_DIR2};

extern "C" void ink_port_write(const uint8_t *bytes, uint8_t n)
{
    Serial.write(bytes, n);
}

static void next_period(void)
{
    uint8_t j;
    ink_tick(&core);
    for (j = 0; j < 2; j++) {
        from[j] = pos[j];
        target[j] = ink_stepper_steps(j, core.q[j]);
        digitalWrite(dir_pin[j], target[j] >= from[j] ? HIGH : LOW);
    }
    pen_servo.writeMicroseconds((int)((ink_pen_ticks(core.pen) + INK_TICKS_PER_US / 2)
                                      / INK_TICKS_PER_US));
}

void setup(void)
{
    uint8_t j;
    for (j = 0; j < 2; j++) {
        pinMode(step_pin[j], OUTPUT);
        pinMode(dir_pin[j], OUTPUT);
    }
    pinMode(INK_PIN_ENABLE, OUTPUT);
    digitalWrite(INK_PIN_ENABLE, LOW);
    pen_servo.attach(INK_PIN_PEN);
    Serial.begin(115200);
    /* At power-on the motors are taken to stand at the home posture: put the
     * arm there by hand (power off) before switching on. */
    ink_init(&core, INK_HOME_Q1, INK_HOME_Q2);
    for (j = 0; j < 2; j++)
        pos[j] = from[j] = target[j] = ink_stepper_steps(j, core.q[j]);
    period_start = micros();
}

void loop(void)
{
    uint32_t elapsed, n, k;
    uint8_t j;
    while (Serial.available() > 0)
        ink_rx_byte(&core, (uint8_t)Serial.read());
    elapsed = micros() - period_start;
    if (elapsed >= INK_PERIOD_US) {
        period_start += INK_PERIOD_US;
        next_period();
        elapsed = micros() - period_start;
    }
    for (j = 0; j < 2; j++) {
        n = (uint32_t)labs(target[j] - from[j]);
        k = (uint32_t)labs(pos[j] - from[j]);
        if (k < n && 2UL * elapsed * n >= (2UL * k + 1UL) * INK_PERIOD_US) {
            digitalWrite(step_pin[j], HIGH);
            delayMicroseconds(2);
            digitalWrite(step_pin[j], LOW);
            pos[j] += target[j] > from[j] ? 1 : -1;
        }
    }
}
