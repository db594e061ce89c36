#include "check.h"
#include "ink_ring.h"

int main(void)
{
    static struct ink_ring r;
    int32_t a, b;
    uint8_t p;
    uint32_t idx;
    int i, round;
    ink_ring_clear(&r, 100);
    CHECK(ink_ring_free(&r) == INK_CAPACITY);
    CHECK(!ink_ring_peek(&r, &a, &b, &p, &idx));
    for (round = 0; round < 3; round++) {
        for (i = 0; i < INK_CAPACITY; i++)
            CHECK(ink_ring_push(&r, i, -i, (uint8_t)(i & 1)));
        CHECK(ink_ring_free(&r) == 0);
        CHECK(!ink_ring_push(&r, 1, 1, 0));
        for (i = 0; i < INK_CAPACITY / 2 + round; i++) {
            CHECK(ink_ring_peek(&r, &a, &b, &p, &idx));
            CHECK(a == i && b == -i && p == (i & 1));
            CHECK(idx == r.next - (uint32_t)r.count);
            ink_ring_drop(&r);
        }
        while (r.count)
            ink_ring_drop(&r);
    }
    CHECK(r.next == 100 + 3 * INK_CAPACITY);
    ink_ring_clear(&r, 7);
    CHECK(ink_ring_push(&r, 5, 6, 1));
    CHECK(ink_ring_peek(&r, &a, &b, &p, &idx) && idx == 7 && r.next == 8);
    return 0;
}
