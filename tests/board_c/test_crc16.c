#include <string.h>
#include "check.h"
#include "ink_crc16.h"

int main(void)
{
    const char *s = "123456789";
    /* CRC-16/IBM-3740 check value 0x29B1: "Catalogue of parametrised CRC
     * algorithms", Greg Cook (reveng.sourceforge.net/crc-catalogue). */
    CHECK(ink_crc16((const uint8_t *)s, 9) == 0x29B1);
    /* no input: the initial value 0xFFFF (no final xor) */
    CHECK(ink_crc16((const uint8_t *)s, 0) == 0xFFFF);
    /* one flipped bit changes it */
    {
        uint8_t b[9];
        memcpy(b, s, 9);
        b[4] ^= 0x10;
        CHECK(ink_crc16(b, 9) != 0x29B1);
    }
    return 0;
}
