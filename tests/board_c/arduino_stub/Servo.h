#ifndef SERVO_STUB_H
#define SERVO_STUB_H
#include <stdint.h>
class Servo {
public:
    uint8_t attach(int pin);
    void writeMicroseconds(int us);
};
#endif
