/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* The board's state machine: protocol v1 (see PROTOCOL.md), one sample per period. */
#include "ink_core.h"

static void put16(uint8_t *p, uint16_t x)
{
    p[0] = (uint8_t)(x & 0xFF);
    p[1] = (uint8_t)(x >> 8);
}

static void put32(uint8_t *p, uint32_t x)
{
    p[0] = (uint8_t)(x & 0xFF);
    p[1] = (uint8_t)((x >> 8) & 0xFF);
    p[2] = (uint8_t)((x >> 16) & 0xFF);
    p[3] = (uint8_t)(x >> 24);
}

static uint32_t get32(const uint8_t *p)
{
    return (uint32_t)p[0] | ((uint32_t)p[1] << 8) | ((uint32_t)p[2] << 16)
        | ((uint32_t)p[3] << 24);
}

static void send(struct ink_core *c, uint8_t type, uint8_t n_body)
{
    uint8_t n;
    c->msg[0] = type;
    c->msg[1] = c->host_seq;
    n = ink_frame_encode(c->msg, (uint8_t)(n_body + 2), c->wire);
    if (n)
        ink_port_write(c->wire, n);
}

static void send_status(struct ink_core *c)
{
    uint8_t *b = c->msg + 2;
    b[0] = c->host_seq;
    put32(b + 1, c->ring.next);
    put16(b + 5, ink_ring_free(&c->ring));
    put32(b + 7, c->done);
    b[11] = c->state;
    put32(b + 12, (uint32_t)c->q[0]);
    put32(b + 16, (uint32_t)c->q[1]);
    b[20] = c->pen;
    b[21] = c->fault;
    c->since_report = 0;
    send(c, 'A', 22);
}

static void send_identity(struct ink_core *c)
{
    static const char name[] = INK_ARM_NAME;
    uint8_t *b = c->msg + 2, i;
    b[0] = INK_PROTOCOL_VERSION;
    b[1] = INK_DRIVE;
    put16(b + 2, INK_CAPACITY);
    put32(b + 4, INK_PERIOD_US);
    put32(b + 8, INK_ARM_HASH);
    for (i = 0; i < sizeof(name) - 1 && i < 40; i++)
        b[12 + i] = (uint8_t)name[i];
    send(c, 'I', (uint8_t)(12 + i));
}

static void send_gap(struct ink_core *c)
{
    put32(c->msg + 2, c->ring.next);
    send(c, 'N', 4);
}

static void send_fault(struct ink_core *c, uint8_t code, uint32_t index, int32_t value)
{
    c->msg[2] = code;
    put32(c->msg + 3, index);
    put32(c->msg + 7, (uint32_t)value);
    send(c, 'F', 9);
}

void ink_init(struct ink_core *c, int32_t q1, int32_t q2)
{
    ink_ring_clear(&c->ring, 0);
    ink_frame_init(&c->rx);
    c->q[0] = q1;
    c->q[1] = q2;
    c->v[0] = c->v[1] = 0;
    c->done = INK_NONE;
    c->last = 0;
    c->pen = 0;
    c->state = INK_IDLE;
    c->fault = INK_F_NONE;
    c->after_stop = INK_STOPPED;
    c->started = 0;
    c->has_last = 0;
    c->host_seq = 0;
    c->cmd_type = 0;
    c->cmd_seq = 0;
    c->since_report = 0;
    c->moved = 0;
}

/* Enter the controlled stop (the pen lifts with its first period), forget the buffer. */
static void begin_stop(struct ink_core *c, uint8_t after)
{
    c->state = INK_STOPPING;
    c->after_stop = after;
    c->has_last = 0;
    ink_ring_clear(&c->ring, c->ring.next);
}

static void ramp(struct ink_core *c)
{
    c->pen = 0;
    c->moved = 1;
    if (ink_ramp_step(c->q, c->v)) {
        c->state = c->after_stop;
        send_status(c);
    }
}

static void fault(struct ink_core *c, uint8_t code, uint32_t index, int32_t value)
{
    c->fault = code;
    c->pen = 0; /* lifts in this very period */
    begin_stop(c, INK_STOPPED);
    send_fault(c, code, index, value);
    send_status(c);
    ramp(c);
}

static int32_t iabs32(int32_t x)
{
    return x < 0 ? -x : x;
}

static void finish(struct ink_core *c)
{
    if (iabs32(c->v[0]) <= INK_DDQ_MAX && iabs32(c->v[1]) <= INK_DDQ_MAX) {
        /* holding the last sample is itself within the acceleration limit */
        c->v[0] = c->v[1] = 0;
        c->state = INK_FINISHED;
        send_status(c);
    } else {
        /* the stream ended while moving fast: brake rather than jump */
        begin_stop(c, INK_FINISHED);
        send_status(c);
    }
}

void ink_tick(struct ink_core *c)
{
    int32_t qn[2], value;
    uint8_t pen, code;
    uint32_t index;
    c->moved = 0;
    if (c->state == INK_STOPPING) {
        ramp(c);
    } else if (c->state == INK_RUNNING) {
        if (!ink_ring_peek(&c->ring, &qn[0], &qn[1], &pen, &index)) {
            if (c->has_last && c->done == c->last)
                finish(c);
            else if (c->started)
                fault(c, INK_F_STARVED, c->ring.next, 0);
            return;
        }
        code = ink_check_sample(c->q, c->v, qn, pen, (uint8_t)!c->started, &value);
        if (code != INK_F_NONE) {
            fault(c, code, index, value);
            return;
        }
        ink_ring_drop(&c->ring);
        c->v[0] = qn[0] - c->q[0];
        c->v[1] = qn[1] - c->q[1];
        c->q[0] = qn[0];
        c->q[1] = qn[1];
        c->pen = pen;
        c->done = index;
        c->started = 1;
        c->moved = 1;
        if (c->has_last && index == c->last) {
            finish(c);
            return;
        }
    }
    if (c->moved && ++c->since_report >= 10)
        send_status(c);
}

static uint8_t repeated(struct ink_core *c, uint8_t type, uint8_t seq)
{
    if (c->cmd_type == type && c->cmd_seq == seq)
        return 1;
    c->cmd_type = type;
    c->cmd_seq = seq;
    return 0;
}

static void on_samples(struct ink_core *c, const uint8_t *b, uint8_t len)
{
    uint32_t first = get32(b), index;
    uint8_t n = b[4], j;
    const uint8_t *s;
    if (n < 1 || n > 5 || len != 5 + 9 * n)
        return;
    c->host_seq = c->msg[1];
    if (c->state == INK_IDLE || c->state == INK_RUNNING) {
        for (j = 0; j < n; j++) {
            index = first + j;
            s = b + 5 + 9 * j;
            if (index < c->ring.next)
                continue;
            if (index > c->ring.next) {
                send_gap(c);
                break;
            }
            if (c->has_last && index > c->last)
                break;
            if (!ink_ring_push(&c->ring, (int32_t)get32(s), (int32_t)get32(s + 4), s[8]))
                break;
        }
    }
    send_status(c);
}

static void on_frame(struct ink_core *c, uint8_t n)
{
    uint8_t type = c->msg[0], seq = c->msg[1], len = (uint8_t)(n - 2);
    uint8_t body[INK_PAYLOAD_MAX];
    uint8_t i;
    uint8_t moving = c->state == INK_RUNNING || c->state == INK_STOPPING;
    for (i = 0; i < len; i++)
        body[i] = c->msg[2 + i];
    switch (type) {
    case 'H':
        if (len != 0)
            return;
        c->host_seq = seq;
        send_identity(c);
        break;
    case 'Q':
        if (len != 0)
            return;
        c->host_seq = seq;
        break;
    case 'S':
        on_samples(c, body, len);
        return;
    case 'B':
        if (len != 4)
            return;
        c->host_seq = seq;
        if (!moving && !repeated(c, type, seq)) {
            ink_ring_clear(&c->ring, get32(body));
            c->state = INK_IDLE;
            c->fault = INK_F_NONE;
            c->has_last = 0;
            c->started = 0;
            c->done = INK_NONE;
            c->v[0] = c->v[1] = 0;
        }
        break;
    case 'G':
        if (len != 0)
            return;
        c->host_seq = seq;
        if (c->state == INK_IDLE && !repeated(c, type, seq)) {
            c->state = INK_RUNNING;
            c->started = 0;
        }
        break;
    case 'E':
        if (len != 4)
            return;
        c->host_seq = seq;
        if ((c->state == INK_IDLE || c->state == INK_RUNNING) && !repeated(c, type, seq)) {
            c->last = get32(body);
            c->has_last = 1;
        }
        break;
    case 'X':
        if (len != 0)
            return;
        c->host_seq = seq;
        if (c->state != INK_STOPPED && c->state != INK_STOPPING && !repeated(c, type, seq))
            begin_stop(c, INK_STOPPED);
        break;
    default:
        return;
    }
    send_status(c);
}

void ink_rx_byte(struct ink_core *c, uint8_t b)
{
    uint8_t n = ink_frame_feed(&c->rx, b, c->msg);
    if (n >= 2)
        on_frame(c, n);
}
