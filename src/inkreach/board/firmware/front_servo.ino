/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* Board front-end for hobby servos (ATmega328P boards: Uno, Nano, Pro Mini, 16 MHz).
 *
 * The two arm servos take their pulses from timer 1's compare outputs, which
 * resolve 1/16 us (62.5 ns): OC1A = pin 9 (motor 1), OC1B = pin 10 (motor 2).
 * The pen servo is any pin (INK_PIN_PEN), timed in whole microseconds.
 * One servo frame per sample period (20 ms = 50 Hz by default).
 * Line: 115200 baud, 8N1, protocol v1 (PROTOCOL.md).
 */
#include <Arduino.h>
#include "inkreach_config.h"
#include "ink_core.h"
#include "ink_output.h"

#if defined(__AVR_ATmega328P__) && (INK_PIN_MOTOR1 != 9 || INK_PIN_MOTOR2 != 10)
#error "on an ATmega328P the fine servo pulses come from pins 9 and 10 (timer 1)"
#endif

static struct ink_core core;
static uint32_t frame_start;

extern "C" void ink_port_write(const uint8_t *bytes, uint8_t n)
{
    Serial.write(bytes, n);
}

/* Raise both servo pins now; the compare units drop them after t1 and t2 ticks. */
static void servo_pulses(uint16_t t1, uint16_t t2)
{
    noInterrupts();
    uint16_t now = TCNT1;
    OCR1A = (uint16_t)(now + t1);
    OCR1B = (uint16_t)(now + t2);
    TCCR1A = _BV(COM1A1) | _BV(COM1A0) | _BV(COM1B1) | _BV(COM1B0); /* set on match */
    TCCR1C = _BV(FOC1A) | _BV(FOC1B);                               /* force: pins high */
    TCCR1A = _BV(COM1A1) | _BV(COM1B1);                             /* clear on match */
    interrupts();
}

static void output(void)
{
    servo_pulses((uint16_t)ink_servo_ticks(0, core.q[0]), (uint16_t)ink_servo_ticks(1, core.q[1]));
    digitalWrite(INK_PIN_PEN, HIGH);
    delayMicroseconds((unsigned int)((ink_pen_ticks(core.pen) + INK_TICKS_PER_US / 2)
                                     / INK_TICKS_PER_US));
    digitalWrite(INK_PIN_PEN, LOW);
}

void setup(void)
{
    pinMode(INK_PIN_MOTOR1, OUTPUT);
    pinMode(INK_PIN_MOTOR2, OUTPUT);
    pinMode(INK_PIN_PEN, OUTPUT);
    TCCR1A = 0;
    TCCR1B = _BV(CS10); /* timer 1 free-running at 16 MHz */
    Serial.begin(115200);
    /* After power-on the board cannot know where the servos are: it drives them
     * to the home posture, pen up. Keep hands clear when switching on. */
    ink_init(&core, INK_HOME_Q1, INK_HOME_Q2);
    frame_start = micros();
}

void loop(void)
{
    while (Serial.available() > 0)
        ink_rx_byte(&core, (uint8_t)Serial.read());
    if ((uint32_t)(micros() - frame_start) >= INK_PERIOD_US) {
        frame_start += INK_PERIOD_US;
        ink_tick(&core);
        output();
    }
}
