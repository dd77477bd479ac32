/*
 * taperline_line.h - builds one Taperline telemetry line from integers.
 *
 * Header-only C99. No floating point, no malloc, no printf: values come in as integer
 * milli-units (mV, mA, m°C), raw ADC counts or 0/1 status pins, and leave as text in the
 * base units Taperline reads (V, A, °C), in one of three shapes:
 *
 *   key=value   t=812.500 vbat=8.214 ibat=0.598 ntc=512 chg=1 flt=0*5C
 *   CSV         t,vbat,ibat,ntc,chg,flt*HH      (header line, sent once)
 *               812.500,8.214,0.598,512,1,0*HH
 *   JSON        {"t":812.500,"vbat":8.214,"ibat":0.598,"ntc":512,"chg":1,"flt":0}*HH
 *
 * Every line ends in `*HH`, the XOR of its bytes before the `*` as two upper-case hex
 * digits (the NMEA 0183 sentence checksum), then `\n`. A line never exceeds
 * TL_MAX_LINE bytes (4096, Taperline's line limit) nor the buffer it is built in: a line
 * that does not fit is not sent at all (tl_end returns 0 and tl_error says why), so the
 * host never sees half a line.
 *
 * Use:
 *   static char buf[80];
 *   static tl_line line;
 *   tl_init(&line, buf, sizeof buf, TL_KV);
 *   do {
 *     tl_begin(&line);
 *     tl_time_ms(&line, millis_now);
 *     tl_milli(&line, "vbat", vbat_mv, 3);
 *     tl_adc(&line, "ntc", ntc_counts);
 *     tl_flag(&line, "chg", charging);
 *     n = tl_end(&line);
 *     if (n) write(buf, n);
 *   } while (tl_was_header(&line));   // CSV: the header went first, now the row
 *
 * On AVR, `_P` variants take keys and texts kept in flash (PSTR / F()), so they cost no RAM.
 */
#ifndef TAPERLINE_LINE_H
#define TAPERLINE_LINE_H

#include <stddef.h>
#include <stdint.h>

#ifndef TL_READ_FLASH_BYTE
#ifdef __AVR__
#include <avr/pgmspace.h>
#define TL_READ_FLASH_BYTE(p) ((char)pgm_read_byte(p))
#else
#define TL_READ_FLASH_BYTE(p) (*(const char *)(p))
#endif
#endif

#ifdef __cplusplus
extern "C" {
#endif

/* Keeps the bigger helpers out of line: each call site then costs a call, which on an
 * 8-bit AVR is what keeps the library small (inlined copies grew the sketch by 1 KB). */
#if defined(__GNUC__)
#define TL__OUTLINE __attribute__((noinline))
#else
#define TL__OUTLINE
#endif
#ifdef __AVR__
#define TL__FLASH PROGMEM
#else
#define TL__FLASH
#endif

/* Taperline's line limit: longer lines are cut and rejected by the app. */
#define TL_MAX_LINE 4096u

/* Shapes. */
#define TL_KV 0u
#define TL_CSV 1u
#define TL_JSON 2u

/* tl_error() bits: why the last line was not sent. */
#define TL_ERR_FULL 0x01u  /* the line did not fit the buffer (or TL_MAX_LINE) */
#define TL_ERR_KEY 0x02u   /* a key is not [A-Za-z_][A-Za-z0-9_.-]* */
#define TL_ERR_VALUE 0x04u /* a word value holds a character other than [A-Za-z0-9_.-] */
#define TL_ERR_EMPTY 0x08u /* a line with no value at all (Taperline rejects those) */

/* Internal state bits. */
#define TL__HEADER_SENT 0x10u
#define TL__HEADER_PASS 0x20u
#define TL__WAS_HEADER 0x40u
#define TL__HAS_VALUE 0x80u /* a value (not only missing cells) is on the line */
#define TL__ERRORS 0x0Fu

typedef struct tl_line {
  char *buf;
  uint16_t cap; /* bytes the line text may use, `*HH` included; `\n` and NUL come after */
  uint16_t len;
  uint8_t shape;
  uint8_t state;
  uint8_t fields; /* values placed on this line (saturates at 255) */
} tl_line;

/* ---- set-up ---------------------------------------------------------------------- */

/* `size` is the whole buffer; two bytes of it are kept for `\n` and a terminating NUL. */
static inline void tl_init(tl_line *l, char *buf, size_t size, uint8_t shape) {
  size_t cap = size >= 2 ? size - 2 : 0;
  if (cap > TL_MAX_LINE) cap = TL_MAX_LINE;
  l->buf = buf;
  l->cap = (uint16_t)cap;
  l->len = 0;
  l->shape = shape <= TL_JSON ? shape : TL_KV;
  l->state = 0;
  l->fields = 0;
}

/* Send the CSV header again before the next row (a new TCP client, a reconnect). */
static inline void tl_resend_header(tl_line *l) { l->state &= (uint8_t)~TL__HEADER_SENT; }

/* ---- byte writers ---------------------------------------------------------------- */

static inline void tl__put(tl_line *l, char c) {
  if (l->len < l->cap)
    l->buf[l->len++] = c;
  else
    l->state |= TL_ERR_FULL;
}

static inline uint8_t tl__is_word_char(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
         c == '.' || c == '-';
}

/* Copies a NUL-terminated string (RAM or flash); returns 0 when it is empty or holds a
 * character outside the word set (keys must also start with a letter or `_`). */
TL__OUTLINE static uint8_t tl__puts(tl_line *l, const char *s, uint8_t flash, uint8_t is_key) {
  uint8_t ok = 1;
  uint16_t i = 0;
  for (;; i++) {
    char c = flash ? TL_READ_FLASH_BYTE(s + i) : s[i];
    if (c == 0) break;
    if (!tl__is_word_char(c) || (is_key && i == 0 && ((c >= '0' && c <= '9') || c == '.' || c == '-')))
      ok = 0;
    tl__put(l, c);
  }
  return (uint8_t)(ok && i > 0);
}

/* Starts a value: separator and key as the shape wants them. Returns 1 when the caller
 * should write the value text, 0 when this pass writes no value (CSV header). */
TL__OUTLINE static uint8_t tl__key(tl_line *l, const char *key, uint8_t flash) {
  uint8_t first = l->fields == 0;
  if (l->fields < 255) l->fields++;
  if (l->shape == TL_CSV) {
    if (!first) tl__put(l, ',');
    if (!(l->state & TL__HEADER_PASS)) return 1;
    if (!tl__puts(l, key, flash, 1)) l->state |= TL_ERR_KEY;
    return 0;
  }
  if (!first) tl__put(l, l->shape == TL_JSON ? ',' : ' ');
  if (l->shape == TL_JSON) tl__put(l, '"');
  if (!tl__puts(l, key, flash, 1)) l->state |= TL_ERR_KEY;
  if (l->shape == TL_JSON) {
    tl__put(l, '"');
    tl__put(l, ':');
  } else {
    tl__put(l, '=');
  }
  return 1;
}

/* Writes +/-mag / 10^drop rounded half away from zero, with `keep` decimals
 * (drop, keep <= 3). `mag` may be 2147483648 (INT32_MIN's magnitude). The rounding adds
 * half of the dropped place and then leaves those digits out, so the only division is the
 * one by 10 that makes the digits. */
TL__OUTLINE static void tl__fixed(tl_line *l, uint32_t mag, uint8_t neg, uint8_t drop, uint8_t keep) {
  char d[10];
  uint8_t n = 0, i, top;
  l->state |= TL__HAS_VALUE;
  mag += drop == 0 ? 0u : drop == 1 ? 5u : drop == 2 ? 50u : 500u;
  do {
    d[n++] = (char)('0' + mag % 10u);
    mag /= 10u;
  } while (mag);
  top = n > drop + keep ? n : (uint8_t)(drop + keep + 1); /* at least one digit before the point */
  /* A value that rounds to zero prints without a sign: then no digit is left above the
   * dropped ones, or the only digit is the 0 of a zero. */
  if (neg && n > drop && d[n - 1] != '0') tl__put(l, '-');
  for (i = top; i-- > drop;) {
    if (i + 1 == drop + keep && keep) tl__put(l, '.');
    tl__put(l, i < n ? d[i] : '0');
  }
}

static inline uint32_t tl__mag(int32_t v) { return v < 0 ? 0u - (uint32_t)v : (uint32_t)v; }

/* ---- lines ----------------------------------------------------------------------- */

/* Starts a new line. In CSV, until the header went out, this line is the header. */
static inline void tl_begin(tl_line *l) {
  l->len = 0;
  l->fields = 0;
  l->state &= (uint8_t)~(TL__ERRORS | TL__HEADER_PASS | TL__WAS_HEADER | TL__HAS_VALUE);
  if (l->shape == TL_CSV && !(l->state & TL__HEADER_SENT)) l->state |= TL__HEADER_PASS;
  if (l->shape == TL_JSON) tl__put(l, '{');
}

/* One signed number: the key, then +/-|v| / 10^drop with `keep` decimals. */
TL__OUTLINE static void tl__num(tl_line *l, const char *key, uint8_t flash, int32_t v, uint8_t drop, uint8_t keep) {
  if (tl__key(l, key, flash)) tl__fixed(l, tl__mag(v), v < 0, drop, keep);
}

/* A value given in thousandths (mV, mA, m°C, ms) printed in the base unit with
 * `decimals` digits after the point (0..3), rounded half away from zero. */
static inline void tl_milli(tl_line *l, const char *key, int32_t milli, uint8_t decimals) {
  if (decimals > 3) decimals = 3;
  tl__num(l, key, 0, milli, (uint8_t)(3 - decimals), decimals);
}
static inline void tl_milli_P(tl_line *l, const char *key, int32_t milli, uint8_t decimals) {
  if (decimals > 3) decimals = 3;
  tl__num(l, key, 1, milli, (uint8_t)(3 - decimals), decimals);
}

/* A whole number as it is: raw ADC counts, a cycle count. */
static inline void tl_int(tl_line *l, const char *key, int32_t value) { tl__num(l, key, 0, value, 0, 0); }
static inline void tl_int_P(tl_line *l, const char *key, int32_t value) { tl__num(l, key, 1, value, 0, 0); }
#define tl_adc tl_int
#define tl_adc_P tl_int_P

/* Device time `t` from a millisecond clock (millis() wraps after 49.7 days; so does t). */
static inline void tl_time_ms(tl_line *l, uint32_t ms) {
  static const char key[] TL__FLASH = "t";
  if (tl__key(l, key, 1)) tl__fixed(l, ms, 0, 0, 3);
}

/* A status pin: 1 when `on` is non-zero, else 0 (the number writer is reused: smaller). */
static inline void tl_flag(tl_line *l, const char *key, int on) { tl__num(l, key, 0, on != 0, 0, 0); }
static inline void tl_flag_P(tl_line *l, const char *key, int on) { tl__num(l, key, 1, on != 0, 0, 0); }

/* A one-word text value such as src=panel (letters, digits, `_`, `.`, `-`). */
TL__OUTLINE static void tl__word(tl_line *l, const char *key, uint8_t kflash, const char *word, uint8_t wflash) {
  if (!tl__key(l, key, kflash)) return;
  l->state |= TL__HAS_VALUE;
  if (l->shape == TL_JSON) tl__put(l, '"');
  if (!tl__puts(l, word, wflash, 0)) l->state |= TL_ERR_VALUE;
  if (l->shape == TL_JSON) tl__put(l, '"');
}
static inline void tl_word(tl_line *l, const char *key, const char *word) { tl__word(l, key, 0, word, 0); }
static inline void tl_word_P(tl_line *l, const char *key, const char *word) { tl__word(l, key, 1, word, 1); }

/* A channel with no reading this time (sensor absent, conversion failed): CSV leaves its
 * cell empty; key=value and JSON leave the key out (Taperline reads a JSON null on an
 * unknown key as the text "null", so null is not used). */
TL__OUTLINE static void tl__missing(tl_line *l, const char *key, uint8_t flash) {
  if (l->shape == TL_CSV) (void)tl__key(l, key, flash);
}
static inline void tl_missing(tl_line *l, const char *key) { tl__missing(l, key, 0); }
static inline void tl_missing_P(tl_line *l, const char *key) { tl__missing(l, key, 1); }

static inline char tl__hex(uint8_t v) { return (char)(v < 10 ? '0' + v : 'A' + v - 10); }

/* The XOR checksum of `n` bytes (the NMEA 0183 sentence checksum). */
static inline uint8_t tl_checksum(const char *s, uint16_t n) {
  uint8_t x = 0;
  while (n--) x ^= (uint8_t)*s++;
  return x;
}

/* Ends the line: `*HH`, `\n`, NUL. Returns the bytes to send (`\n` included), or 0 when
 * the line must not be sent (see tl_error). */
TL__OUTLINE static uint16_t tl_end(tl_line *l) {
  uint8_t x, i;
  if (l->state & TL__HEADER_PASS ? l->fields < 2 /* a header needs two names to read as one */
                                 : !(l->state & TL__HAS_VALUE))
    l->state |= TL_ERR_EMPTY;
  if (l->shape == TL_JSON) tl__put(l, '}');
  x = tl_checksum(l->buf, l->len);
  tl__put(l, '*');
  for (i = 0; i < 2; i++, x = (uint8_t)(x << 4)) tl__put(l, tl__hex((uint8_t)(x >> 4)));
  if (l->state & TL__ERRORS) return l->len = 0;
  l->buf[l->len++] = '\n'; /* room kept by tl_init */
  l->buf[l->len] = 0;
  if (l->state & TL__HEADER_PASS) l->state |= TL__HEADER_SENT | TL__WAS_HEADER;
  return l->len;
}

/* Why the last tl_end returned 0 (TL_ERR_* bits), 0 when it was sent. */
static inline uint8_t tl_error(const tl_line *l) { return (uint8_t)(l->state & TL__ERRORS); }

/* The line just ended was the CSV header: send it, then build the row again. */
static inline uint8_t tl_was_header(const tl_line *l) { return (uint8_t)((l->state & TL__WAS_HEADER) != 0); }

/* The start-up line `# board=<id> fw=<version>` (no checksum: Taperline stores `#` lines as
 * the board's own words). Returns its length with `\n`, or 0 when id or version is empty,
 * holds a character outside [A-Za-z0-9_.-] or does not fit. */
TL__OUTLINE static uint16_t tl__board(tl_line *l, const char *id, const char *fw, uint8_t flash) {
  static const char head[] TL__FLASH = "# board=";
  static const char mid[] TL__FLASH = " fw=";
  uint8_t ok;
  l->len = 0;
  l->state &= (uint8_t)~(TL__ERRORS | TL__WAS_HEADER);
  (void)tl__puts(l, head, 1, 0); /* fixed text: its `#`, space and `=` are meant */
  ok = tl__puts(l, id, flash, 0);
  (void)tl__puts(l, mid, 1, 0);
  ok &= tl__puts(l, fw, flash, 0);
  if (!ok) l->state |= TL_ERR_VALUE;
  if (l->state & TL__ERRORS) {
    l->len = 0;
    return 0;
  }
  l->buf[l->len++] = '\n';
  l->buf[l->len] = 0;
  return l->len;
}
static inline uint16_t tl_board(tl_line *l, const char *id, const char *fw) { return tl__board(l, id, fw, 0); }
static inline uint16_t tl_board_P(tl_line *l, const char *id, const char *fw) {
  return tl__board(l, id, fw, 1);
}

/* ---- integer conversions --------------------------------------------------------- */

/* counts * full_scale / steps, rounded half up, without overflow for counts and steps up
 * to 65535: an ADC reading to milli-units. `full_scale` is what a reading of `steps`
 * would mean (e.g. 5000 mV reference x 11 divider = 55000 mV, steps 1024 on AVR:
 * the ATmega328P datasheet gives ADC = Vin x 1024 / Vref). */
static inline uint32_t tl_scale_counts(uint16_t counts, uint32_t full_scale, uint16_t steps) {
  uint32_t q = full_scale / steps, r = full_scale % steps;
  return (uint32_t)counts * q + ((uint32_t)counts * r + steps / 2u) / steps;
}

/* num / den rounded half away from zero (den > 0). */
static inline int32_t tl_div_round(int32_t num, int32_t den) {
  uint32_t m = tl__mag(num), d = (uint32_t)den;
  uint32_t q = m / d + (m % d >= d - d / 2u);
  return num < 0 ? (int32_t)(0u - q) : (int32_t)q;
}

#ifdef __cplusplus
}
#endif

#endif /* TAPERLINE_LINE_H */
