/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_CRC16_H
#define INK_CRC16_H
#include <stdint.h>
#ifdef __cplusplus
extern "C" {
#endif
/* CRC-16/IBM-3740: poly 0x1021, init 0xFFFF, no reflection, no final xor. */
uint16_t ink_crc16(const uint8_t *data, uint16_t n);
#ifdef __cplusplus
}
#endif
#endif
