/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* Bitwise CRC-16/IBM-3740 (no table: small and slow is fine at 115200 baud). */
#include "ink_crc16.h"

uint16_t ink_crc16(const uint8_t *data, uint16_t n)
{
    uint16_t crc = 0xFFFFu;
    uint16_t i;
    uint8_t b;
    for (i = 0; i < n; i++) {
        crc ^= (uint16_t)((uint16_t)data[i] << 8);
        for (b = 0; b < 8; b++) {
            if (crc & 0x8000u)
                crc = (uint16_t)((crc << 1) ^ 0x1021u);
            else
                crc = (uint16_t)(crc << 1);
        }
    }
    return crc;
}
