/*
 * CAUTION: reference firmware, to be reviewed; NOT a certified motion controller.
 * Rehearse every new arm and plan with the pen lifted and the arm unloaded, keep
 * hands clear of a moving arm, keep a power switch within reach, and check the
 * pin numbers and pulse ranges against your motors' and drivers' documentation
 * (and follow their makers' instructions and local rules) before the first run.
 */
/* Simulated board: the real C core behind a pseudo-terminal, on the host computer.
 *
 * usage: inkreach-sim SPEEDUP [TRACE.csv]
 * Prints the terminal's path as the first line on stdout, then serves until
 * SIGINT or SIGTERM (exit 0). SIGUSR1 reboots the core: buffer and state are
 * lost, the motors stay where they are, the pen lifts. Board time advances one
 * period per tick; the wall clock sleeps period / SPEEDUP per tick.
 */
#define _GNU_SOURCE
#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include "ink_core.h"
#include "ink_output.h"

static int master = -1;
static volatile sig_atomic_t quit = 0, reboot = 0;
static struct ink_core core;


void ink_port_write(const uint8_t *bytes, uint8_t n)
{
    ssize_t k;
    while (n > 0) {
        k = write(master, bytes, n);
        if (k <= 0)
            return; /* nobody reading: a real line drops it too */
        bytes += k;
        n = (uint8_t)(n - k);
    }
}

static void on_quit(int sig)
{
    (void)sig;
    quit = 1;
}

static void on_reboot(int sig)
{
    (void)sig;
    reboot = 1;
}

#if INK_DRIVE == 0
static const double servo1[INK_SERVO1_POINTS][2] = INK_SERVO1_TABLE;
static const double servo2[INK_SERVO2_POINTS][2] = INK_SERVO2_TABLE;

/* angle (1e-4 degree) a servo pulse puts the joint at: the table read backwards */
static double servo_angle(const double (*tab)[2], int n, double ticks)
{
    int k = 0, rising = tab[n - 1][1] > tab[0][1];
    double lo = rising ? tab[0][1] : tab[n - 1][1], hi = rising ? tab[n - 1][1] : tab[0][1];
    if (ticks <= lo)
        return rising ? tab[0][0] : tab[n - 1][0];
    if (ticks >= hi)
        return rising ? tab[n - 1][0] : tab[0][0];
    while (k + 2 < n && (rising ? ticks >= tab[k + 1][1] : ticks <= tab[k + 1][1]))
        k++;
    return tab[k][0] + (ticks - tab[k][1]) * (tab[k + 1][0] - tab[k][0])
        / (tab[k + 1][1] - tab[k][1]);
}

#endif

static double executed_deg(int joint, int32_t q)
{
#if INK_DRIVE == 1
    double s = (double)ink_stepper_steps((uint8_t)joint, q);
    if (joint == 0)
        return (INK_STEP1_ZERO + INK_STEP1_DIR * s * INK_STEP1_DEN / INK_STEP1_NUM) / 1e4;
    return (INK_STEP2_ZERO + INK_STEP2_DIR * s * INK_STEP2_DEN / INK_STEP2_NUM) / 1e4;
#else
    double t = (double)ink_servo_ticks((uint8_t)joint, q);
    return (joint == 0 ? servo_angle(servo1, INK_SERVO1_POINTS, t)
                       : servo_angle(servo2, INK_SERVO2_POINTS, t)) / 1e4;
#endif
}

static void trace_row(FILE *tr, unsigned long long tick)
{
    if (!tr)
        return;
    fprintf(tr, "%.4f,%.6f,%.6f,%d\n", (double)tick * INK_PERIOD_US / 1e6,
            executed_deg(0, core.q[0]), executed_deg(1, core.q[1]), core.pen ? 1 : 0);
    fflush(tr);
}

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec + ts.tv_nsec / 1e9;
}

int main(int argc, char **argv)
{
    double speedup, step, next, wait;
    unsigned long long tick = 0;
    FILE *tr = NULL;
    int slave;
    char *path;
    struct termios tio;
    struct sigaction sa;
    struct pollfd pfd;
    struct timespec ts;
    uint8_t buf[256];
    ssize_t k, i;

    if (argc < 2 || (speedup = atof(argv[1])) <= 0) {
        fprintf(stderr, "usage: %s SPEEDUP [TRACE.csv]\n", argv[0]);
        return 2;
    }
    if (argc > 2) {
        tr = fopen(argv[2], "w");
        if (!tr) {
            fprintf(stderr, "cannot write the trace %s: %s\n", argv[2], strerror(errno));
            return 2;
        }
        fprintf(tr, "t_s,theta1_deg,theta2_deg,pen\n");
        fflush(tr);
    }
    master = posix_openpt(O_RDWR | O_NOCTTY);
    if (master < 0 || grantpt(master) || unlockpt(master) || !(path = ptsname(master))) {
        fprintf(stderr, "cannot open a pseudo-terminal: %s\n", strerror(errno));
        return 2;
    }
    /* keep the far end open ourselves: raw, and no hang-up when the host closes it */
    slave = open(path, O_RDWR | O_NOCTTY);
    if (slave < 0 || tcgetattr(slave, &tio)) {
        fprintf(stderr, "cannot set up %s: %s\n", path, strerror(errno));
        return 2;
    }
    cfmakeraw(&tio);
    cfsetispeed(&tio, B115200);
    cfsetospeed(&tio, B115200);
    tcsetattr(slave, TCSANOW, &tio);
    fcntl(master, F_SETFL, fcntl(master, F_GETFL) | O_NONBLOCK);

    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_quit;
    sigaction(SIGINT, &sa, NULL);
    sigaction(SIGTERM, &sa, NULL);
    sa.sa_handler = on_reboot;
    sigaction(SIGUSR1, &sa, NULL);
    signal(SIGPIPE, SIG_IGN);

    ink_init(&core, INK_HOME_Q1, INK_HOME_Q2);
    printf("%s\n", path);
    fflush(stdout);

    step = INK_PERIOD_US / 1e6 / speedup;
    next = now_s() + step;
    pfd.fd = master;
    pfd.events = POLLIN;
    while (!quit) {
        if (reboot) {
            reboot = 0;
            ink_init(&core, core.q[0], core.q[1]);
            trace_row(tr, tick); /* the pen lifts; the motors stop where they are */
        }
        wait = next - now_s();
        if (wait > 0) {
            pfd.revents = 0;
            ts.tv_sec = (time_t)wait;
            ts.tv_nsec = (long)((wait - (double)ts.tv_sec) * 1e9);
            if (ppoll(&pfd, 1, &ts, NULL) > 0 && (pfd.revents & POLLIN)) {
                k = read(master, buf, sizeof buf);
                for (i = 0; i < k; i++)
                    ink_rx_byte(&core, buf[i]);
            }
            if (next - now_s() > 0)
                continue;
        }
        /* drain what arrived, then advance the board clock one period */
        while ((k = read(master, buf, sizeof buf)) > 0)
            for (i = 0; i < k; i++)
                ink_rx_byte(&core, buf[i]);
        ink_tick(&core);
        tick++;
        if (core.moved)
            trace_row(tr, tick);
        next += step;
        if (now_s() - next > 5 * step)
            next = now_s() + step; /* fell behind (busy machine): do not burst */
    }
    if (tr)
        fclose(tr);
    close(slave);
    close(master);
    return 0;
}
