/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
#ifndef INK_CORE_H
#define INK_CORE_H
#include <stdint.h>
#include "inkreach_config.h"
#include "ink_frame.h"
#include "ink_ring.h"
#include "ink_check.h"
#ifdef __cplusplus
extern "C" {
#endif
#define INK_PROTOCOL_VERSION 1
#define INK_NONE 0xFFFFFFFFUL

enum { INK_IDLE = 0, INK_RUNNING = 1, INK_STOPPING = 2, INK_STOPPED = 3, INK_FINISHED = 4 };

struct ink_core {
    struct ink_ring ring;
    struct ink_frame_rx rx;
    uint8_t msg[INK_PAYLOAD_MAX + 2];   /* decoded frame in, payload out */
    uint8_t wire[INK_RX_MAX + 2];       /* encoded frame out */
    int32_t q[2];                       /* posture of the motors now, 1e-4 degree */
    int32_t v[2];                       /* last change per period */
    uint32_t done;                      /* last stream sample executed, or INK_NONE */
    uint32_t last;                      /* from E */
    uint8_t pen;                        /* pen output now: 1 down */
    uint8_t state;
    uint8_t fault;
    uint8_t after_stop;                 /* state entered when the stop ramp ends */
    uint8_t started;                    /* a sample was executed since G */
    uint8_t has_last;
    uint8_t host_seq;                   /* seq of the last host frame answered */
    uint8_t cmd_type, cmd_seq;          /* last B/G/E/X acted on (type 0: none) */
    uint8_t since_report;
    uint8_t moved;                      /* 1 when the last tick output a sample */
};

/* The front-end provides this: send n bytes to the host (may drop when busy). */
void ink_port_write(const uint8_t *bytes, uint8_t n);

/* Boot (or reboot) with the motors at posture q1, q2: idle, empty buffer, pen up. */
void ink_init(struct ink_core *c, int32_t q1, int32_t q2);
/* Feed one byte received from the host. */
void ink_rx_byte(struct ink_core *c, uint8_t b);
/* Advance one period: execute the next sample, a stop-ramp step, or hold.
 * Afterwards c->q, c->pen are the outputs to apply, c->moved says whether a
 * sample (stream or stop ramp) was executed. */
void ink_tick(struct ink_core *c);
#ifdef __cplusplus
}
#endif
#endif
