#include <string.h>
#include "check.h"
#include "ink_frame.h"

static struct ink_frame_rx rx;
static uint8_t out[INK_PAYLOAD_MAX + 2];

/* feed bytes; return the length of the last valid frame seen, count them */
static int feed(const uint8_t *b, int n, int *frames)
{
    int i, last = 0;
    uint8_t k;
    for (i = 0; i < n; i++) {
        k = ink_frame_feed(&rx, b[i], out);
        if (k) {
            last = k;
            (*frames)++;
        }
    }
    return last;
}

int main(void)
{
    uint8_t pay[62], wire[80], junk[200];
    int n, frames = 0, i, bit, ok;
    for (i = 0; i < 62; i++)
        pay[i] = (uint8_t)(i * 37);
    pay[0] = 'S';
    ink_frame_init(&rx);
    n = ink_frame_encode(pay, 20, wire);
    CHECK(wire[n - 1] == 0);
    CHECK(feed(wire, n, &frames) == 20 && frames == 1);
    CHECK(memcmp(out, pay, 20) == 0);
    /* the longest payload fits; one byte more is refused by the encoder */
    n = ink_frame_encode(pay, INK_PAYLOAD_MAX, wire);
    CHECK(n > 0 && feed(wire, n, &frames) == INK_PAYLOAD_MAX);
    CHECK(ink_frame_encode(pay, INK_PAYLOAD_MAX + 1, wire) == 0);
    /* garbage without zeros, then a frame: the garbage costs that frame only */
    for (i = 0; i < 200; i++)
        junk[i] = (uint8_t)(1 + (i * 91) % 255);
    frames = 0;
    feed(junk, 200, &frames);
    n = ink_frame_encode(pay, 12, wire);
    feed(wire, n, &frames);
    CHECK(frames == 0);
    CHECK(feed(wire, n, &frames) == 12 && frames == 1);
    /* short garbage with zeros in it never yields a frame */
    frames = 0;
    for (i = 0; i < 200; i++)
        junk[i] = (uint8_t)((i * 53) % 7);
    feed(junk, 200, &frames);
    CHECK(frames == 0);
    /* every single bit flip in a frame is caught, and the next frame is read */
    n = ink_frame_encode(pay, 30, wire);
    for (i = 0; i < n - 1; i++) {
        for (bit = 0; bit < 8; bit++) {
            uint8_t bad[80];
            memcpy(bad, wire, (size_t)n);
            bad[i] ^= (uint8_t)(1 << bit);
            frames = 0;
            ink_frame_init(&rx);
            feed(bad, n, &frames);
            ok = feed(wire, n, &frames);
            CHECK(ok == 30);
            CHECK(frames == 1);
        }
    }
    /* a dropped delimiter merges two frames into one that fails: next one is fine */
    frames = 0;
    n = ink_frame_encode(pay, 10, wire);
    feed(wire, n - 1, &frames);
    feed(wire, n, &frames);
    CHECK(frames == 0);
    CHECK(feed(wire, n, &frames) == 10 && frames == 1);
    /* an empty frame (two zeros) and a too-short one are dropped */
    frames = 0;
    junk[0] = 0; junk[1] = 0; junk[2] = 0x02; junk[3] = 0x41; junk[4] = 0;
    feed(junk, 5, &frames);
    CHECK(frames == 0);
    return 0;
}
