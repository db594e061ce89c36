/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_RING_H
#define INK_RING_H
#include <stdint.h>
#include "inkreach_config.h"
#ifdef __cplusplus
extern "C" {
#endif
/* The sample buffer: a ring of INK_CAPACITY samples, stream indices
 * next - count ... next - 1, oldest at head. Three plain arrays: 9 bytes a sample. */
struct ink_ring {
    int32_t q1[INK_CAPACITY];
    int32_t q2[INK_CAPACITY];
    uint8_t pen[INK_CAPACITY];
    uint16_t head;
    uint16_t count;
    uint32_t next;   /* stream index of the next sample to be pushed */
};

void ink_ring_clear(struct ink_ring *r, uint32_t next);
uint16_t ink_ring_free(const struct ink_ring *r);
/* returns 1 when stored, 0 when full */
uint8_t ink_ring_push(struct ink_ring *r, int32_t q1, int32_t q2, uint8_t pen);
/* oldest sample and its index; returns 0 when empty */
uint8_t ink_ring_peek(const struct ink_ring *r, int32_t *q1, int32_t *q2, uint8_t *pen,
                      uint32_t *index);
void ink_ring_drop(struct ink_ring *r);
#ifdef __cplusplus
}
#endif
#endif
