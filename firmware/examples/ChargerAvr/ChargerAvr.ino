/*
 * ChargerAvr - one Taperline telemetry line a second from an 8-bit AVR board
 * (ATmega328P, 16 MHz, 5 V) watching a charger. Integer arithmetic only.
 *
 * Wiring (see the firmware README for the cautions and for other packs):
 *   A0  pack voltage through a divider: pack+ - 15 k - A0 - 10 k - GND (2S Li-ion, 8.4 V -> 3.36 V)
 *   A1  charge current: output of a current-sense amplifier, gain 100, on a 10 mOhm
 *       shunt in the charge path (1 A -> 1.000 V; 5 A full scale)
 *   A2  NTC: 10 k pull-up from AVCC to A2, 10 k NTC from A2 to GND (sent raw as `ntc`)
 *   D4  charger's "charging" status output (open drain, low = charging)
 *   D5  charger's "fault" status output (open drain, low = fault)
 *   GND common with the pack's negative terminal
 *
 * Profile for Taperline: { "chemistry": "li-ion", "cells": 2, ...,
 *   "thermistor": { "model": "beta", "r25": 10000, "beta": 3435, "pullupOhm": 10000, "adcMax": 1023 } }
 */
#include <Arduino.h>
#ifdef __AVR__
#include <avr/sleep.h>
#endif
#include "Taperline.h"

#ifndef BOARD_ID
#define BOARD_ID "GS-0042" /* invented board id: set your own */
#endif
#ifndef FW_VERSION
#define FW_VERSION "1.4.2"
#endif
#ifndef TAPERLINE_SHAPE
#define TAPERLINE_SHAPE TL_KV /* or TL_CSV, TL_JSON */
#endif
#ifndef SAMPLE_MS
#define SAMPLE_MS 1000UL
#endif
#ifndef LINE_BYTES
#define LINE_BYTES 80 /* enough for the longest line below in every shape, with `*HH\n` */
#endif

// ADC reference: AVCC, taken as 5000 mV. Measure your board's 5 V and put it here: every
// voltage and current reading scales with it.
const uint32_t VREF_MV = 5000;
// Divider on A0: full scale = what a reading of 1024 would mean.
const uint32_t DIV_TOP_OHM = 15000, DIV_BOTTOM_OHM = 10000;
const uint32_t VBAT_FULL_SCALE_MV = VREF_MV * (DIV_TOP_OHM + DIV_BOTTOM_OHM) / DIV_BOTTOM_OHM;
// Current-sense amplifier on A1: mA at full scale = Vref / (gain x shunt).
const uint32_t SHUNT_MILLIOHM = 10, AMP_GAIN = 100;
const uint32_t IBAT_FULL_SCALE_MA = VREF_MV * 1000UL / (AMP_GAIN * SHUNT_MILLIOHM);
// The ATmega328P's ADC: ADC = Vin x 1024 / Vref (datasheet, "ADC Conversion Result").
// Four readings are summed, so a full-scale sum is 4 x 1024.
const uint16_t OVERSAMPLE = 4, SUM_STEPS = 4 * 1024;

const uint8_t PIN_VBAT = A0, PIN_IBAT = A1, PIN_NTC = A2, PIN_CHG = 4, PIN_FLT = 5;

#ifndef TAPERLINE_BASELINE
Taperline<LINE_BYTES> tl(Serial, TAPERLINE_SHAPE);
#endif

static uint16_t readSum(uint8_t pin) {
  analogRead(pin); // the first conversion after switching the input is discarded
  uint16_t sum = 0;
  for (uint8_t i = 0; i < OVERSAMPLE; i++) sum += analogRead(pin);
  return sum;
}

static void waitUntil(uint32_t dueMs) {
  while ((int32_t)(millis() - dueMs) < 0) {
#ifdef __AVR__
    // Idle sleep: the timer and the UART keep running and wake the core every millisecond.
    set_sleep_mode(SLEEP_MODE_IDLE);
    sleep_mode();
#endif
  }
}

#ifdef TAPERLINE_BASELINE
// The same readings without the library, for the size comparison in `npm run bench`:
// the values go out as raw bytes so the compiler keeps every reading.
static void sendBaseline(uint32_t ms, uint16_t v, uint16_t i, uint16_t n, bool chg, bool flt) {
  uint8_t raw[12] = {(uint8_t)ms, (uint8_t)(ms >> 8), (uint8_t)(ms >> 16), (uint8_t)(ms >> 24),
                     (uint8_t)v,  (uint8_t)(v >> 8),  (uint8_t)i,         (uint8_t)(i >> 8),
                     (uint8_t)n,  (uint8_t)(n >> 8),  (uint8_t)chg,       (uint8_t)flt};
  Serial.write(raw, sizeof raw);
}
#endif

void setup() {
  Serial.begin(115200);
  pinMode(PIN_CHG, INPUT_PULLUP); // status outputs are open drain
  pinMode(PIN_FLT, INPUT_PULLUP);
#ifdef __AVR__
  // No PWM output here: stop the core's timers 1 and 2 (less current; timer 0 keeps millis()).
  TCCR1B = 0;
  TCCR2B = 0;
#endif
#ifndef TAPERLINE_BASELINE
  tl.hello(F(BOARD_ID), F(FW_VERSION));
#endif
}

void loop() {
  static uint32_t dueMs = 0;
  waitUntil(dueMs);
  dueMs += SAMPLE_MS;

  uint32_t nowMs = millis();
  uint16_t vSum = readSum(PIN_VBAT);
  uint16_t iSum = readSum(PIN_IBAT);
  uint16_t ntcCounts = (readSum(PIN_NTC) + OVERSAMPLE / 2) / OVERSAMPLE;
  bool charging = digitalRead(PIN_CHG) == LOW;
  bool fault = digitalRead(PIN_FLT) == LOW;

#ifdef TAPERLINE_BASELINE
  sendBaseline(nowMs, vSum, iSum, ntcCounts, charging, fault);
#else
  int32_t vbatMv = (int32_t)tl_scale_counts(vSum, VBAT_FULL_SCALE_MV, SUM_STEPS);
  int32_t ibatMa = (int32_t)tl_scale_counts(iSum, IBAT_FULL_SCALE_MA, SUM_STEPS);
  do {
    tl.begin();
    tl.timeMs(nowMs);
    tl.milli(F("vbat"), vbatMv, 3);
    tl.milli(F("ibat"), ibatMa, 3);
    // Raw counts, also at a rail: Taperline reads 0 or 1023 as a shorted or open NTC.
    tl.adc(F("ntc"), ntcCounts);
    tl.flag(F("chg"), charging);
    tl.flag(F("flt"), fault);
  } while (tl.send());
#endif
}
