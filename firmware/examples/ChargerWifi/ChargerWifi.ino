/*
 * ChargerWifi - the ChargerAvr lines from a Wi-Fi board, streamed to a TCP client: start
 * Taperline with the source tcp://<board address>:5025 and it connects here.
 *
 * Written against the common Arduino WiFi server API (WiFi.begin, WiFiServer, WiFiClient);
 * the header that provides it is <WiFi.h> on most Wi-Fi boards (some cores name it
 * differently: change the include). ADC_STEPS is what a full-scale analogRead would return
 * plus one: 4096 for a 12-bit reading, 1024 for a 10-bit one.
 *
 * Wiring as in the firmware README, scaled for 3.3 V: pack divider 47 k over 4.7 k (11x),
 * current-sense amplifier with gain 100 on a 10 mOhm shunt (1 mV per mA), 10 k NTC with a
 * 10 k pull-up to the ADC reference, the charger's status outputs on inputs with pull-ups.
 * Many Wi-Fi boards' ADCs are not linear near the rails: calibrate against a meter.
 */
#include <Arduino.h>
#include <WiFi.h>

#include "Taperline.h"

#ifndef WIFI_SSID
#define WIFI_SSID "your-network"
#endif
#ifndef WIFI_PASSWORD
#define WIFI_PASSWORD "your-password"
#endif
#ifndef TCP_PORT
#define TCP_PORT 5025
#endif
#define BOARD_ID "GS-0042" /* invented board id: set your own */
#define FW_VERSION "1.4.2"

const uint32_t VREF_MV = 3300;
const uint32_t VBAT_FULL_SCALE_MV = VREF_MV * (47000UL + 4700UL) / 4700UL;
const uint32_t IBAT_FULL_SCALE_MA = VREF_MV * 1000UL / (100UL * 10UL); // Vref / (gain x shunt)
#ifndef ADC_STEPS
#define ADC_STEPS 4096
#endif
const uint16_t STEPS = ADC_STEPS;

const uint8_t PIN_VBAT = A0, PIN_IBAT = A1, PIN_NTC = A2, PIN_CHG = 4, PIN_FLT = 5;

WiFiServer server(TCP_PORT);
WiFiClient client;
Taperline<160> tl(Serial, TL_KV); // until a client connects, lines go to the USB serial port

void setup() {
  Serial.begin(115200);
  pinMode(PIN_CHG, INPUT_PULLUP);
  pinMode(PIN_FLT, INPUT_PULLUP);
  WiFi.begin(WIFI_SSID, WIFI_PASSWORD);
  while (WiFi.status() != WL_CONNECTED) delay(250);
  server.begin();
  Serial.print(F("# listening on tcp://"));
  Serial.print(WiFi.localIP());
  Serial.print(':');
  Serial.println(TCP_PORT);
}

void loop() {
  static uint32_t dueMs = 0;
  // A new client gets the board line first (and the CSV header again, if CSV is used).
  WiFiClient incoming = server.available();
  if (incoming) {
    client.stop();
    client = incoming;
    tl.setOutput(client);
    tl.hello(F(BOARD_ID), F(FW_VERSION));
  }
  if (client && !client.connected()) {
    client.stop();
    tl.setOutput(Serial);
  }
  if ((int32_t)(millis() - dueMs) < 0) {
    delay(2);
    return;
  }
  dueMs += 1000;

  uint32_t nowMs = millis();
  int32_t vbatMv = (int32_t)tl_scale_counts(analogRead(PIN_VBAT), VBAT_FULL_SCALE_MV, STEPS);
  int32_t ibatMa = (int32_t)tl_scale_counts(analogRead(PIN_IBAT), IBAT_FULL_SCALE_MA, STEPS);
  int ntcCounts = analogRead(PIN_NTC); // profile: "pullupOhm": 10000, "adcMax": ADC_STEPS - 1
  do {
    tl.begin();
    tl.timeMs(nowMs);
    tl.milli(F("vbat"), vbatMv, 3);
    tl.milli(F("ibat"), ibatMa, 3);
    tl.adc(F("ntc"), ntcCounts);
    tl.flag(F("chg"), digitalRead(PIN_CHG) == LOW);
    tl.flag(F("flt"), digitalRead(PIN_FLT) == LOW);
  } while (tl.send());
}
