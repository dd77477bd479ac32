/*
 * Declarations of the common Arduino WiFi server API, only so that `make wifi-check` can
 * compile the ChargerWifi example for syntax and types against the AVR core (no Wi-Fi
 * board core is packaged in Debian). Nothing here runs; it is never linked.
 */
#pragma once
#include <Client.h>
#include <IPAddress.h>

enum { WL_CONNECTED = 3 };

class WiFiClient : public Client {
public:
  int connect(IPAddress ip, uint16_t port);
  int connect(const char *host, uint16_t port);
  size_t write(uint8_t);
  size_t write(const uint8_t *buf, size_t size);
  int available();
  int read();
  int read(uint8_t *buf, size_t size);
  int peek();
  void flush();
  void stop();
  uint8_t connected();
  operator bool();
};

class WiFiServer {
public:
  explicit WiFiServer(uint16_t port);
  void begin();
  WiFiClient available();
};

class WiFiClass {
public:
  int begin(const char *ssid, const char *pass);
  uint8_t status();
  IPAddress localIP();
};
extern WiFiClass WiFi;
