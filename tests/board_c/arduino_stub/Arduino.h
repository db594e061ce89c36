/* Just enough of an Arduino/AVR environment to compile the sketch front-ends on the
 * host (syntax and types only; nothing here runs). */
#ifndef ARDUINO_STUB_H
#define ARDUINO_STUB_H
#include <stdint.h>
#include <stddef.h>
#include <stdlib.h>
#define HIGH 1
#define LOW 0
#define OUTPUT 1
#define _BV(b) (1u << (b))
#define COM1A1 7
#define COM1A0 6
#define COM1B1 5
#define COM1B0 4
#define FOC1A 7
#define FOC1B 6
#define CS10 0
extern volatile uint8_t TCCR1A, TCCR1B, TCCR1C;
extern volatile uint16_t TCNT1, OCR1A, OCR1B;
void pinMode(uint8_t pin, uint8_t mode);
void digitalWrite(uint8_t pin, uint8_t value);
unsigned long micros(void);
void delayMicroseconds(unsigned int us);
void noInterrupts(void);
void interrupts(void);
struct SerialStub {
    void begin(unsigned long baud);
    int available(void);
    int read(void);
    size_t write(const uint8_t *bytes, size_t n);
};
extern SerialStub Serial;
#endif
