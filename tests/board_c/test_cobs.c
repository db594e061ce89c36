#include <string.h>
#include "check.h"
#include "ink_cobs.h"

static void roundtrip(const uint8_t *in, uint16_t n, const uint8_t *want, uint16_t m)
{
    uint8_t enc[300], dec[300];
    uint16_t k = ink_cobs_encode(in, n, enc), i;
    CHECK(k == m);
    CHECK(memcmp(enc, want, m) == 0);
    for (i = 0; i < k; i++)
        CHECK(enc[i] != 0);
    CHECK(ink_cobs_decode(enc, k, dec, sizeof dec) == (int16_t)n);
    CHECK(memcmp(dec, in, n) == 0);
}

int main(void)
{
    /* The worked examples of Consistent Overhead Byte Stuffing (S. Cheshire and
     * M. Baker, IEEE/ACM Trans. Networking 7(2), 1999) as tabulated in the
     * Wikipedia article "Consistent Overhead Byte Stuffing" (from memory). */
    static const uint8_t a[] = {0x00}, ae[] = {0x01, 0x01};
    static const uint8_t b[] = {0x00, 0x00}, be[] = {0x01, 0x01, 0x01};
    static const uint8_t c[] = {0x00, 0x11, 0x00}, ce[] = {0x01, 0x02, 0x11, 0x01};
    static const uint8_t d[] = {0x11, 0x22, 0x00, 0x33}, de[] = {0x03, 0x11, 0x22, 0x02, 0x33};
    static const uint8_t e[] = {0x11, 0x22, 0x33, 0x44}, ee[] = {0x05, 0x11, 0x22, 0x33, 0x44};
    static const uint8_t f[] = {0x11, 0x00, 0x00, 0x00}, fe[] = {0x02, 0x11, 0x01, 0x01, 0x01};
    uint8_t g[255], ge[257], bad[4];
    int i;
    roundtrip(a, 1, ae, 2);
    roundtrip(b, 2, be, 3);
    roundtrip(c, 3, ce, 4);
    roundtrip(d, 4, de, 5);
    roundtrip(e, 4, ee, 5);
    roundtrip(f, 4, fe, 5);
    /* 01 02 ... FE (254 bytes) -> FF 01 02 ... FE */
    for (i = 0; i < 254; i++)
        g[i] = (uint8_t)(i + 1);
    ge[0] = 0xFF;
    memcpy(ge + 1, g, 254);
    roundtrip(g, 254, ge, 255);
    /* 00 01 ... FE (255 bytes) -> 01 FF 01 ... FE */
    g[0] = 0;
    for (i = 1; i < 255; i++)
        g[i] = (uint8_t)i;
    ge[0] = 0x01;
    ge[1] = 0xFF;
    for (i = 1; i < 255; i++)
        ge[i + 1] = (uint8_t)i;
    roundtrip(g, 255, ge, 256);
    /* 01 02 ... FE FF (255 bytes) -> FF 01 ... FE 02 FF */
    for (i = 0; i < 255; i++)
        g[i] = (uint8_t)(i + 1);
    ge[0] = 0xFF;
    for (i = 0; i < 254; i++)
        ge[i + 1] = (uint8_t)(i + 1);
    ge[255] = 0x02;
    ge[256] = 0xFF;
    roundtrip(g, 255, ge, 257);
    /* invalid input: a code running past the end, a zero inside, no room */
    bad[0] = 0x05; bad[1] = 0x11;
    CHECK(ink_cobs_decode(bad, 2, g, sizeof g) == -1);
    bad[0] = 0x03; bad[1] = 0x00; bad[2] = 0x11;
    CHECK(ink_cobs_decode(bad, 3, g, sizeof g) == -1);
    CHECK(ink_cobs_decode(ee, 5, g, 3) == -1);
    return 0;
}
