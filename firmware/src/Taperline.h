/*
 * Taperline.h - the Arduino face of taperline_line.h: builds each telemetry line in a
 * buffer of N bytes and writes it whole to any Print (Serial, a Wi-Fi client).
 *
 *   Taperline<80> tl(Serial, TL_KV);
 *   tl.hello(F("GS-0042"), F("1.4.2"));        // "# board=GS-0042 fw=1.4.2"
 *   do {
 *     tl.begin();
 *     tl.timeMs(millis());
 *     tl.milli(F("vbat"), vbatMv, 3);
 *     tl.adc(F("ntc"), ntcCounts);
 *     tl.flag(F("chg"), charging);
 *   } while (tl.send());                      // true once in CSV: the header went first
 *
 * Keys given with F() stay in flash. A line that does not fit N bytes is not sent; the
 * board says so in a `#` line instead and dropped() counts it.
 */
#ifndef TAPERLINE_H
#define TAPERLINE_H

#include <Arduino.h>

#ifndef TL_READ_FLASH_BYTE
#define TL_READ_FLASH_BYTE(p) ((char)pgm_read_byte(p))
#endif
#include "taperline_line.h"

template <size_t N> class Taperline {
public:
  Taperline(Print &out, uint8_t shape) : out_(&out), dropped_(0) { tl_init(&line_, buf_, N, shape); }

  /* Another output (a new TCP client): the next line repeats the CSV header. */
  void setOutput(Print &out) {
    out_ = &out;
    tl_resend_header(&line_);
  }

  /* The start-up line with the board id and firmware version. */
  bool hello(const __FlashStringHelper *board, const __FlashStringHelper *fw) {
    return write(tl_board_P(&line_, (const char *)board, (const char *)fw));
  }
  bool hello(const char *board, const char *fw) { return write(tl_board(&line_, board, fw)); }

  void begin() { tl_begin(&line_); }
  void timeMs(uint32_t ms) { tl_time_ms(&line_, ms); }
  void milli(const __FlashStringHelper *key, int32_t v, uint8_t decimals = 3) {
    tl_milli_P(&line_, (const char *)key, v, decimals);
  }
  void milli(const char *key, int32_t v, uint8_t decimals = 3) { tl_milli(&line_, key, v, decimals); }
  void adc(const __FlashStringHelper *key, int32_t counts) { tl_int_P(&line_, (const char *)key, counts); }
  void adc(const char *key, int32_t counts) { tl_int(&line_, key, counts); }
  void flag(const __FlashStringHelper *key, bool on) { tl_flag_P(&line_, (const char *)key, on); }
  void flag(const char *key, bool on) { tl_flag(&line_, key, on); }
  void word(const __FlashStringHelper *key, const __FlashStringHelper *w) {
    tl_word_P(&line_, (const char *)key, (const char *)w);
  }
  void word(const char *key, const char *w) { tl_word(&line_, key, w); }
  void missing(const __FlashStringHelper *key) { tl_missing_P(&line_, (const char *)key); }
  void missing(const char *key) { tl_missing(&line_, key); }

  /* Ends and writes the line. Returns true when that line was the CSV header, so the
   * caller builds the same line again as the first row. */
  bool send() {
    uint16_t n = tl_end(&line_);
    if (n == 0) {
      dropped_++;
      out_->print(F("# line not sent, error "));
      out_->write(tl__hex(tl_error(&line_)));
      out_->write('\n');
      return false;
    }
    write(n);
    return tl_was_header(&line_) != 0;
  }

  uint16_t dropped() const { return dropped_; }
  const char *text() const { return buf_; }

private:
  bool write(uint16_t n) {
    if (n == 0) return false;
    out_->write((const uint8_t *)buf_, n);
    return true;
  }

  Print *out_;
  uint16_t dropped_;
  tl_line line_;
  char buf_[N];
};

#endif /* TAPERLINE_H */
