/*
 * Host unit tests of taperline_line.h: formatting, rounding, checksum and limits.
 * Exit status 0 when every check passes; each failure prints what was expected.
 */
#include <limits.h>
#include <stdio.h>
#include <string.h>

#include "../src/taperline_line.h"

static int failures = 0;
static int checks = 0;

#define EXPECT_STR(got, want)                                                                     \
  do {                                                                                            \
    checks++;                                                                                     \
    if (strcmp((got), (want)) != 0) {                                                             \
      failures++;                                                                                 \
      printf("FAIL %s:%d\n  got:  \"%s\"\n  want: \"%s\"\n", __FILE__, __LINE__, (got), (want)); \
    }                                                                                             \
  } while (0)

#define EXPECT_INT(got, want)                                                                      \
  do {                                                                                             \
    long g_ = (long)(got), w_ = (long)(want);                                                      \
    checks++;                                                                                      \
    if (g_ != w_) {                                                                                \
      failures++;                                                                                  \
      printf("FAIL %s:%d: %s = %ld, want %ld\n", __FILE__, __LINE__, #got, g_, w_);                \
    }                                                                                              \
  } while (0)

static char buf[TL_MAX_LINE + 64];
static tl_line l;

/* One value alone on a key=value line, without the `*HH\n`. */
static const char *milli_text(int32_t v, uint8_t d) {
  static char out[64];
  char *star;
  tl_init(&l, buf, sizeof buf, TL_KV);
  tl_begin(&l);
  tl_milli(&l, "v", v, d);
  tl_end(&l);
  strcpy(out, buf + 2);
  star = strchr(out, '*');
  if (star) *star = 0;
  return out;
}

static void test_formatting(void) {
  EXPECT_STR(milli_text(8214, 3), "8.214");
  EXPECT_STR(milli_text(0, 3), "0.000");
  EXPECT_STR(milli_text(0, 0), "0");
  EXPECT_STR(milli_text(5, 3), "0.005");
  EXPECT_STR(milli_text(-5, 3), "-0.005");
  EXPECT_STR(milli_text(-1000, 3), "-1.000");
  EXPECT_STR(milli_text(123456, 1), "123.5");
  EXPECT_STR(milli_text(INT32_MAX, 3), "2147483.647");
  EXPECT_STR(milli_text(INT32_MIN, 3), "-2147483.648");
  EXPECT_STR(milli_text(INT32_MAX, 0), "2147484");
  EXPECT_STR(milli_text(INT32_MIN, 0), "-2147484");
  EXPECT_STR(milli_text(INT32_MIN, 1), "-2147483.6");
  EXPECT_STR(milli_text(27100, 9), "27.100"); /* more than 3 decimals: 3 */
}

static void test_rounding(void) {
  /* Half away from zero, on the magnitude (common practice for meter displays). */
  EXPECT_STR(milli_text(27150, 1), "27.2");
  EXPECT_STR(milli_text(27149, 1), "27.1");
  EXPECT_STR(milli_text(-27150, 1), "-27.2");
  EXPECT_STR(milli_text(-27149, 1), "-27.1");
  EXPECT_STR(milli_text(499, 0), "0");
  EXPECT_STR(milli_text(500, 0), "1");
  EXPECT_STR(milli_text(-499, 0), "0"); /* rounds to zero: no "-0" */
  EXPECT_STR(milli_text(-49, 1), "0.0");
  EXPECT_STR(milli_text(-50, 1), "-0.1");
  EXPECT_STR(milli_text(9995, 2), "10.00");
  EXPECT_STR(milli_text(999999, 0), "1000");
  EXPECT_INT(tl_div_round(7, 2), 4);
  EXPECT_INT(tl_div_round(-7, 2), -4);
  EXPECT_INT(tl_div_round(5, 3), 2);
  EXPECT_INT(tl_div_round(4, 3), 1);
  EXPECT_INT(tl_div_round(-4, 3), -1);
  EXPECT_INT(tl_div_round(INT32_MIN, 1), INT32_MIN);
  EXPECT_INT(tl_div_round(INT32_MAX, 2), 1073741824);
  /* ADC counts to milli-units: 5000 mV reference, 15k/10k divider = 12500 mV full scale,
   * 1024 steps (ATmega328P datasheet: ADC = Vin x 1024 / Vref). */
  EXPECT_INT(tl_scale_counts(0, 12500, 1024), 0);
  EXPECT_INT(tl_scale_counts(1023, 12500, 1024), 12488); /* 12487.79 */
  EXPECT_INT(tl_scale_counts(512, 12500, 1024), 6250);
  EXPECT_INT(tl_scale_counts(1, 12500, 1024), 12); /* 12.207 */
  EXPECT_INT(tl_scale_counts(65535, 4000000000u, 65535), 4000000000u);
  EXPECT_INT(tl_scale_counts(65534, 65535, 65535), 65534);
}

static void test_checksum(void) {
  /* NMEA 0183 sentence checksum vectors: the XOR between `$` and `*` of
   * $GPRMC,155123.000,A,4043.8432,N,07359.7653,W,0.15,83.25,200407,,*28 (tigoe.net) and
   * $GNGLL,2239.37849,N,11400.75600,E,123254.00,A,A*7F (R em38 docs). */
  const char *rmc = "GPRMC,155123.000,A,4043.8432,N,07359.7653,W,0.15,83.25,200407,,";
  const char *gll = "GNGLL,2239.37849,N,11400.75600,E,123254.00,A,A";
  EXPECT_INT(tl_checksum(rmc, (uint16_t)strlen(rmc)), 0x28);
  EXPECT_INT(tl_checksum(gll, (uint16_t)strlen(gll)), 0x7F);
  EXPECT_INT(tl_checksum("", 0), 0);
  /* A whole line: the digits are upper case and cover the text before `*`. */
  tl_init(&l, buf, sizeof buf, TL_KV);
  tl_begin(&l);
  tl_time_ms(&l, 812500);
  tl_milli(&l, "vbat", 8214, 3);
  tl_milli(&l, "ibat", 598, 3);
  tl_int(&l, "ntc", 512);
  tl_flag(&l, "chg", 1);
  tl_flag(&l, "flt", 0);
  EXPECT_INT(tl_end(&l), strlen("t=812.500 vbat=8.214 ibat=0.598 ntc=512 chg=1 flt=0*3C\n"));
  /* 3C: XOR of the text before `*`, computed independently with Python
   * (functools.reduce over the bytes). */
  EXPECT_STR(buf, "t=812.500 vbat=8.214 ibat=0.598 ntc=512 chg=1 flt=0*3C\n");
}

static void test_shapes(void) {
  /* Expected checksums computed independently with Python (XOR of the UTF-8 bytes). */
  /* CSV: the header once, then rows; a missing reading is an empty cell. */
  int pass;
  tl_init(&l, buf, sizeof buf, TL_CSV);
  for (pass = 0; pass < 3; pass++) {
    tl_begin(&l);
    tl_time_ms(&l, 1000);
    tl_milli(&l, "vbat", 7400, 3);
    tl_missing(&l, "temp");
    tl_flag(&l, "chg", 1);
    tl_end(&l);
    if (pass == 0) {
      EXPECT_INT(tl_was_header(&l), 1);
      EXPECT_STR(buf, "t,vbat,temp,chg*39\n");
    } else {
      EXPECT_INT(tl_was_header(&l), 0);
      EXPECT_STR(buf, "1.000,7.400,,1*1F\n");
    }
  }
  tl_resend_header(&l);
  tl_begin(&l);
  tl_milli(&l, "vbat", 7400, 3);
  tl_flag(&l, "chg", 1);
  tl_end(&l);
  EXPECT_STR(buf, "vbat,chg*41\n");

  /* JSON: a missing reading is left out, words are quoted. */
  tl_init(&l, buf, sizeof buf, TL_JSON);
  tl_begin(&l);
  tl_milli(&l, "ibat", -250, 3);
  tl_missing(&l, "temp");
  tl_word(&l, "src", "panel");
  tl_end(&l);
  EXPECT_STR(buf, "{\"ibat\":-0.250,\"src\":\"panel\"}*24\n");

  /* key=value: a missing reading is left out; a line with no value is not sent (any shape). */
  tl_init(&l, buf, sizeof buf, TL_KV);
  tl_begin(&l);
  tl_missing(&l, "temp");
  tl_milli(&l, "vin", 17900, 1);
  tl_end(&l);
  EXPECT_STR(buf, "vin=17.9*5D\n");
  tl_begin(&l);
  tl_missing(&l, "temp");
  EXPECT_INT(tl_end(&l), 0);
  EXPECT_INT(tl_error(&l), TL_ERR_EMPTY);
  tl_init(&l, buf, sizeof buf, TL_JSON); /* "{}" carries nothing */
  tl_begin(&l);
  tl_missing(&l, "temp");
  EXPECT_INT(tl_end(&l), 0);
  EXPECT_INT(tl_error(&l), TL_ERR_EMPTY);
  tl_init(&l, buf, sizeof buf, TL_CSV); /* a row of empty cells carries nothing */
  tl_begin(&l);
  tl_missing(&l, "temp");
  tl_missing(&l, "vbat");
  EXPECT_INT(tl_end(&l), strlen("temp,vbat*XX\n"));
  tl_begin(&l);
  tl_missing(&l, "temp");
  tl_missing(&l, "vbat");
  EXPECT_INT(tl_end(&l), 0);
  EXPECT_INT(tl_error(&l), TL_ERR_EMPTY);
}

static void test_board_line(void) {
  tl_init(&l, buf, sizeof buf, TL_CSV);
  EXPECT_INT(tl_board(&l, "GS-0042", "1.4.2"), strlen("# board=GS-0042 fw=1.4.2\n"));
  EXPECT_STR(buf, "# board=GS-0042 fw=1.4.2\n");
  EXPECT_INT(tl_board(&l, "GS 42", "1.4.2"), 0); /* a space would split the id */
  EXPECT_INT(tl_error(&l), TL_ERR_VALUE);
  EXPECT_INT(tl_board(&l, "", "1"), 0);
  /* The board line does not count as the CSV header. */
  tl_begin(&l);
  tl_int(&l, "a", 1);
  tl_int(&l, "b", 2);
  tl_end(&l);
  EXPECT_STR(buf, "a,b*2F\n");
}

static void test_bad_keys(void) {
  const char *bad[] = {"", "9v", "v bat", "v=bat", "v\"", "-x", ".x", "v*"};
  unsigned i;
  for (i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    tl_init(&l, buf, sizeof buf, TL_KV);
    tl_begin(&l);
    tl_int(&l, bad[i], 1);
    EXPECT_INT(tl_end(&l), 0);
    EXPECT_INT(tl_error(&l), TL_ERR_KEY);
  }
  tl_init(&l, buf, sizeof buf, TL_KV);
  tl_begin(&l);
  tl_word(&l, "src", "solar panel");
  EXPECT_INT(tl_end(&l), 0);
  EXPECT_INT(tl_error(&l), TL_ERR_VALUE);
  /* Allowed: letters, digits, _ . - after a letter or _. */
  tl_begin(&l);
  tl_int(&l, "_cell.2-v", 3);
  EXPECT_INT(tl_end(&l), strlen("_cell.2-v=3*XX\n"));
}

static void test_limits(void) {
  /* A buffer of 16 bytes holds 14 bytes of line text: "vbat=8.214*HH" is 13. */
  char small[16];
  uint16_t n;
  int k;
  memset(small, 'Z', sizeof small);
  tl_init(&l, small, sizeof small, TL_KV);
  tl_begin(&l);
  tl_milli(&l, "vbat", 8214, 3);
  n = tl_end(&l);
  EXPECT_INT(n, 14);
  tl_begin(&l);
  tl_milli(&l, "vbat", 18214, 3); /* 14 bytes of text + `\n` + NUL = 16: fits exactly */
  n = tl_end(&l);
  EXPECT_INT(n, 15);
  EXPECT_INT(small[15], 0);
  tl_begin(&l);
  tl_milli(&l, "vbat", 118214, 3); /* one byte too many: not sent, nothing written past the end */
  n = tl_end(&l);
  EXPECT_INT(n, 0);
  EXPECT_INT(tl_error(&l), TL_ERR_FULL);

  /* Taperline's limit holds whatever the buffer: 4096 bytes of text at most. Each `kNNN=1`
   * pair is 7 bytes with its separator; 584 pairs = 4087 bytes, + "*HH" = 4090 fits;
   * 585 pairs do not. */
  tl_init(&l, buf, sizeof buf, TL_KV);
  EXPECT_INT(l.cap, TL_MAX_LINE);
  tl_begin(&l);
  for (k = 0; k < 584; k++) {
    char key[8];
    snprintf(key, sizeof key, "k%03d", k);
    tl_int(&l, key, 1);
  }
  n = tl_end(&l);
  EXPECT_INT(n, 4091);
  tl_begin(&l);
  for (k = 0; k < 585; k++) {
    char key[8];
    snprintf(key, sizeof key, "k%03d", k);
    tl_int(&l, key, 1);
  }
  EXPECT_INT(tl_end(&l), 0);
  EXPECT_INT(tl_error(&l), TL_ERR_FULL);

  /* A buffer too small for anything. */
  tl_init(&l, small, 1, TL_JSON);
  tl_begin(&l);
  EXPECT_INT(tl_end(&l), 0);
}

int main(void) {
  test_formatting();
  test_rounding();
  test_checksum();
  test_shapes();
  test_board_line();
  test_bad_keys();
  test_limits();
  printf("%d checks, %d failed\n", checks, failures);
  return failures ? 1 : 0;
}
