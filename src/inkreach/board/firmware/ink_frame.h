/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_FRAME_H
#define INK_FRAME_H
#include <stdint.h>
#ifdef __cplusplus
extern "C" {
#endif
#define INK_PAYLOAD_MAX 62   /* type + seq + body (at most 64 decoded bytes with the CRC) */
#define INK_RX_MAX 66        /* COBS of 64 bytes is 65 bytes */

struct ink_frame_rx {
    uint8_t buf[INK_RX_MAX];
    uint8_t len;
    uint8_t overflow;
};

void ink_frame_init(struct ink_frame_rx *rx);
/* Feed one received byte. When it ends a valid frame, the payload (type, seq,
 * body; CRC removed) goes to payload[INK_PAYLOAD_MAX + 2] and its length (2 or
 * more) is returned; otherwise 0. Garbage costs at most the frame it hit. */
uint8_t ink_frame_feed(struct ink_frame_rx *rx, uint8_t byte, uint8_t *payload);
/* Encode payload into out (room for INK_RX_MAX + 1 bytes) with CRC, COBS and the
 * 0x00 delimiter; returns the byte count, 0 when the payload is too long. */
uint8_t ink_frame_encode(const uint8_t *payload, uint8_t n, uint8_t *out);
#ifdef __cplusplus
}
#endif
#endif
