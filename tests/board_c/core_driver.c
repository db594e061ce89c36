/* Drives the board core from a script on stdin, for the Python tests:
 *   b HEX     feed received bytes
 *   t N       N ticks; after each: "T q1 q2 pen state moved fault done"
 *   o Q1 Q2   print "O ticks1 ticks2 steps1 steps2" for a posture
 *   r Q1 Q2   reboot at that posture
 * Frames the core sends are printed as "W HEX" lines. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "ink_core.h"
#include "ink_output.h"

static struct ink_core core;

void ink_port_write(const uint8_t *bytes, uint8_t n)
{
    uint8_t i;
    printf("W ");
    for (i = 0; i < n; i++)
        printf("%02x", bytes[i]);
    printf("\n");
}

int main(void)
{
    static char line[8192];
    long a, b;
    unsigned int byte;
    char *p;
    int n;
    ink_init(&core, INK_HOME_Q1, INK_HOME_Q2);
    while (fgets(line, sizeof line, stdin)) {
        if (line[0] == 'b') {
            for (p = line + 2; sscanf(p, "%2x", &byte) == 1; p += 2)
                ink_rx_byte(&core, (uint8_t)byte);
        } else if (line[0] == 't') {
            n = atoi(line + 2);
            while (n-- > 0) {
                ink_tick(&core);
                printf("T %ld %ld %d %d %d %d %lu\n", (long)core.q[0], (long)core.q[1],
                       core.pen, core.state, core.moved, core.fault,
                       (unsigned long)core.done);
            }
        } else if (line[0] == 'o' && sscanf(line + 2, "%ld %ld", &a, &b) == 2) {
            printf("O %ld %ld %ld %ld\n", (long)ink_servo_ticks(0, (int32_t)a),
                   (long)ink_servo_ticks(1, (int32_t)b), (long)ink_stepper_steps(0, (int32_t)a),
                   (long)ink_stepper_steps(1, (int32_t)b));
        } else if (line[0] == 'r' && sscanf(line + 2, "%ld %ld", &a, &b) == 2) {
            ink_init(&core, (int32_t)a, (int32_t)b);
        } else if (line[0] == 's') {
            printf("Z %lu\n", (unsigned long)sizeof(struct ink_core));
        }
    }
    return 0;
}
