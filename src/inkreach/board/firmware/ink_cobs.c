/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#include "ink_cobs.h"

uint16_t ink_cobs_encode(const uint8_t *in, uint16_t n, uint8_t *out)
{
    uint16_t code_at = 0, o = 1, i;
    uint8_t code = 1;
    for (i = 0; i < n; i++) {
        if (in[i] == 0) {
            out[code_at] = code;
            code_at = o++;
            code = 1;
        } else {
            out[o++] = in[i];
            code++;
            if (code == 0xFF) {
                out[code_at] = code;
                if (i + 1 == n)
                    return o; /* a full block at the very end needs no further code */
                code_at = o++;
                code = 1;
            }
        }
    }
    out[code_at] = code;
    return o;
}

int16_t ink_cobs_decode(const uint8_t *in, uint16_t n, uint8_t *out, uint16_t cap)
{
    uint16_t i = 0, o = 0, k;
    uint8_t code;
    while (i < n) {
        code = in[i++];
        if (code == 0)
            return -1;
        if ((uint16_t)(i + code - 1) > n)
            return -1;
        for (k = 1; k < code; k++) {
            if (in[i] == 0 || o >= cap)
                return -1;
            out[o++] = in[i++];
        }
        if (code != 0xFF && i < n) {
            if (o >= cap)
                return -1;
            out[o++] = 0;
        }
    }
    return (int16_t)o;
}
