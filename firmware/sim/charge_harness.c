/*
 * charge_harness - runs a built sketch (an ATmega328P .elf) in simavr, with
 *   - its UART0 bridged to a pseudo-terminal (the path is printed as "pty <path>"), so
 *     `taperline record --port <path>` reads it as it would read a USB-serial board, and
 *     every byte also copied to a log file;
 *   - its analog pins A0..A2 and status pins D4, D5 fed from a scripted charge, one row per
 *     second of simulated time: "<A0 mV> <A1 mV> <A2 mV> <D4 level> <D5 level>".
 *
 *   charge_harness FIRMWARE.elf SCRIPT.txt SPEEDUP UART.log
 *
 * After printing the pty it waits for a line on standard input (the reader is ready),
 * then runs the script's duration at SPEEDUP times real time, prints "done ...", and
 * keeps the pty open until standard input ends.
 */
#define _GNU_SOURCE
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include "avr_adc.h"
#include "avr_ioport.h"
#include "avr_uart.h"
#include "sim_avr.h"
#include "sim_elf.h"

#define F_CPU 16000000u
#define MAX_ROWS 100000

typedef struct {
  int pin_mv[3];
  int d4, d5;
} row_t;

static row_t rows[MAX_ROWS];
static int nrows = 0;
static avr_t *avr;
static int pty_fd = -1;
static FILE *uart_log;
static avr_irq_t *adc_irq[3];
static avr_irq_t *pin_d4, *pin_d5;

static int row_at(void) {
  avr_cycle_count_t s = avr->cycle / F_CPU;
  return s < (avr_cycle_count_t)nrows ? (int)s : nrows - 1;
}

/* Status pins follow the script, set again at every ADC start: the sketch's own pull-up
 * set-up would otherwise leave them at the pull-up level. */
static void apply_pins(int r) {
  avr_raise_irq(pin_d4, (uint32_t)rows[r].d4);
  avr_raise_irq(pin_d5, (uint32_t)rows[r].d5);
}

/* simavr asks for the input voltages when a conversion starts. */
static void adc_trigger(avr_irq_t *irq, uint32_t value, void *param) {
  (void)irq;
  (void)value;
  (void)param;
  int r = row_at();
  apply_pins(r);
  for (int i = 0; i < 3; i++) avr_raise_irq(adc_irq[i], (uint32_t)rows[r].pin_mv[i]);
}

static void uart_out(avr_irq_t *irq, uint32_t value, void *param) {
  (void)irq;
  (void)param;
  uint8_t b = (uint8_t)value;
  fputc(b, uart_log);
  if (write(pty_fd, &b, 1) != 1) { /* the reader went away: keep logging */
  }
}

/* Sleep costs no real time here: the run is paced against the wall clock below instead. */
static void no_sleep(avr_t *a, avr_cycle_count_t how_long) {
  (void)a;
  (void)how_long;
}

static double now_s(void) {
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + (double)ts.tv_nsec / 1e9;
}

static int open_pty(char *name, size_t size) {
  int fd = posix_openpt(O_RDWR | O_NOCTTY);
  struct termios t;
  int slave;
  if (fd < 0 || grantpt(fd) || unlockpt(fd) || ptsname_r(fd, name, size)) return -1;
  /* Raw on the board's side as on a USB-serial adapter: no echo, no newline translation. */
  slave = open(name, O_RDWR | O_NOCTTY);
  if (slave >= 0) {
    tcgetattr(slave, &t);
    cfmakeraw(&t);
    tcsetattr(slave, TCSANOW, &t);
    close(slave);
  }
  return fd;
}

int main(int argc, char **argv) {
  elf_firmware_t fw;
  char pty_name[128], line[256];
  double speedup, t0, sim_end_s;
  FILE *script;
  uint32_t flags = 0;
  unsigned long steps = 0, sleeps = 0;

  if (argc != 5) {
    fprintf(stderr, "usage: charge_harness FIRMWARE.elf SCRIPT.txt SPEEDUP UART.log\n");
    return 2;
  }
  speedup = atof(argv[3]);
  script = fopen(argv[2], "r");
  if (!script) {
    perror(argv[2]);
    return 2;
  }
  while (nrows < MAX_ROWS && fgets(line, sizeof line, script)) {
    row_t *r = &rows[nrows];
    if (sscanf(line, "%d %d %d %d %d", &r->pin_mv[0], &r->pin_mv[1], &r->pin_mv[2], &r->d4, &r->d5) == 5)
      nrows++;
  }
  fclose(script);
  if (nrows == 0) {
    fprintf(stderr, "charge_harness: no rows in %s\n", argv[2]);
    return 2;
  }
  uart_log = fopen(argv[4], "wb");
  if (!uart_log) {
    perror(argv[4]);
    return 2;
  }

  memset(&fw, 0, sizeof fw);
  if (elf_read_firmware(argv[1], &fw) != 0) {
    fprintf(stderr, "charge_harness: cannot read %s\n", argv[1]);
    return 2;
  }
  strcpy(fw.mmcu, "atmega328p");
  fw.frequency = F_CPU;
  avr = avr_make_mcu_by_name(fw.mmcu);
  if (!avr) return 2;
  avr_init(avr);
  avr_load_firmware(avr, &fw);
  avr->avcc = avr->aref = avr->vcc = 5000; /* the 5 V board */
  avr->sleep = no_sleep;
  /* Sleep may skip ahead to the next timer event (the default limit is one cycle). */
  avr->run_cycle_limit = F_CPU / 1000u;

  avr_ioctl(avr, AVR_IOCTL_UART_GET_FLAGS('0'), &flags);
  /* No console copy, and no real-time pause when the firmware polls the UART. */
  flags &= ~(uint32_t)(AVR_UART_FLAG_STDIO | AVR_UART_FLAG_POLL_SLEEP);
  avr_ioctl(avr, AVR_IOCTL_UART_SET_FLAGS('0'), &flags);
  avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUTPUT), uart_out, NULL);
  for (int i = 0; i < 3; i++) adc_irq[i] = avr_io_getirq(avr, AVR_IOCTL_ADC_GETIRQ, ADC_IRQ_ADC0 + i);
  avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_ADC_GETIRQ, ADC_IRQ_OUT_TRIGGER), adc_trigger, NULL);
  pin_d4 = avr_io_getirq(avr, AVR_IOCTL_IOPORT_GETIRQ('D'), 4);
  pin_d5 = avr_io_getirq(avr, AVR_IOCTL_IOPORT_GETIRQ('D'), 5);
  apply_pins(0);

  pty_fd = open_pty(pty_name, sizeof pty_name);
  if (pty_fd < 0) {
    perror("charge_harness: pty");
    return 2;
  }
  printf("pty %s\n", pty_name);
  fflush(stdout);
  if (!fgets(line, sizeof line, stdin)) return 0; /* nobody is listening */

  /* Half a second into the last row: its line is out of the UART, the next not yet due. */
  sim_end_s = nrows - 0.5;
  t0 = now_s();
  for (;;) {
    int state = avr_run(avr);
    steps++; if (avr->state == cpu_Sleeping) sleeps++;
    double sim_s = (double)avr->cycle / F_CPU;
    if (state == cpu_Done || state == cpu_Crashed) {
      fprintf(stderr, "charge_harness: the firmware stopped (state %d) at %.3f s\n", state, sim_s);
      return 1;
    }
    if (sim_s >= sim_end_s) break;
    if (speedup > 0) {
      double ahead = sim_s / speedup - (now_s() - t0);
      if (ahead > 0.002) usleep((useconds_t)(ahead * 1e6));
    }
  }
  fflush(uart_log);
  fclose(uart_log);
  printf("done %.3f s simulated in %.3f s (%lu steps, %lu asleep)\n", (double)avr->cycle / F_CPU, now_s() - t0, steps, sleeps);
  fflush(stdout);
  /* The pty stays open (the board stays plugged in) until standard input ends. */
  while (fgets(line, sizeof line, stdin)) {
  }
  close(pty_fd);
  return 0;
}
