/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#include "ink_frame.h"
#include "ink_cobs.h"
#include "ink_crc16.h"

void ink_frame_init(struct ink_frame_rx *rx)
{
    rx->len = 0;
    rx->overflow = 0;
}

uint8_t ink_frame_feed(struct ink_frame_rx *rx, uint8_t byte, uint8_t *payload)
{
    int16_t n;
    uint16_t crc;
    if (byte != 0) {
        if (rx->len >= INK_RX_MAX)
            rx->overflow = 1;
        else
            rx->buf[rx->len++] = byte;
        return 0;
    }
    if (rx->overflow || rx->len == 0) {
        ink_frame_init(rx);
        return 0;
    }
    n = ink_cobs_decode(rx->buf, rx->len, payload, INK_PAYLOAD_MAX + 2);
    ink_frame_init(rx);
    if (n < 4)
        return 0;
    crc = ink_crc16(payload, (uint16_t)(n - 2));
    if (payload[n - 2] != (uint8_t)(crc >> 8) || payload[n - 1] != (uint8_t)(crc & 0xFF))
        return 0;
    return (uint8_t)(n - 2);
}

uint8_t ink_frame_encode(const uint8_t *payload, uint8_t n, uint8_t *out)
{
    uint8_t tmp[INK_PAYLOAD_MAX + 2];
    uint16_t crc, m;
    uint8_t i;
    if (n > INK_PAYLOAD_MAX)
        return 0;
    for (i = 0; i < n; i++)
        tmp[i] = payload[i];
    crc = ink_crc16(payload, n);
    tmp[n] = (uint8_t)(crc >> 8);
    tmp[n + 1] = (uint8_t)(crc & 0xFF);
    m = ink_cobs_encode(tmp, (uint16_t)(n + 2), out);
    out[m++] = 0;
    return (uint8_t)m;
}
