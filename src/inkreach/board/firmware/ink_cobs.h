/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_COBS_H
#define INK_COBS_H
#include <stdint.h>
#ifdef __cplusplus
extern "C" {
#endif
/* Consistent Overhead Byte Stuffing (Cheshire & Baker, 1999).
 * encode: writes at most n + n/254 + 1 bytes, none of them zero; returns the count.
 * decode: returns the decoded length, or -1 when the input is not valid COBS or
 * the output would exceed cap. Neither handles the 0x00 delimiter. */
uint16_t ink_cobs_encode(const uint8_t *in, uint16_t n, uint8_t *out);
int16_t ink_cobs_decode(const uint8_t *in, uint16_t n, uint8_t *out, uint16_t cap);
#ifdef __cplusplus
}
#endif
#endif
