/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#include "ink_ring.h"

void ink_ring_clear(struct ink_ring *r, uint32_t next)
{
    r->head = 0;
    r->count = 0;
    r->next = next;
}

uint16_t ink_ring_free(const struct ink_ring *r)
{
    return (uint16_t)(INK_CAPACITY - r->count);
}

uint8_t ink_ring_push(struct ink_ring *r, int32_t q1, int32_t q2, uint8_t pen)
{
    uint16_t at;
    if (r->count >= INK_CAPACITY)
        return 0;
    at = (uint16_t)((r->head + r->count) % INK_CAPACITY);
    r->q1[at] = q1;
    r->q2[at] = q2;
    r->pen[at] = pen;
    r->count++;
    r->next++;
    return 1;
}

uint8_t ink_ring_peek(const struct ink_ring *r, int32_t *q1, int32_t *q2, uint8_t *pen,
                      uint32_t *index)
{
    if (r->count == 0)
        return 0;
    *q1 = r->q1[r->head];
    *q2 = r->q2[r->head];
    *pen = r->pen[r->head];
    *index = r->next - r->count;
    return 1;
}

void ink_ring_drop(struct ink_ring *r)
{
    if (r->count == 0)
        return;
    r->head = (uint16_t)((r->head + 1) % INK_CAPACITY);
    r->count--;
}
