// The library alone on an ATmega2560, for `make size`: a program that links every part of it
// (receive, device logic, reports) with a one-lamp panel and a bare UART, and no Arduino core.
// Built twice, with and without the library, so the difference is the library's own cost.
#include <avr/io.h>

#if PP_EMPTY_PROBE
int main() {
  for (;;) {
  }
}
#else
#include "PanelproofLink.h"

extern "C" void __cxa_pure_virtual() {
  for (;;) {
  }
}

namespace {

volatile uint32_t fakeClock;
uint32_t clockMs() { return fakeClock++; }
uint32_t clockUs() { return fakeClock++; }

struct ProbePanel : pp::Panel {
  bool lamp = false;
  uint16_t elementCount() const override { return 1; }
  void follow(const pp::Channel* c, uint16_t) override { lamp = c[0].isOn(); }
  void rest() override { lamp = false; }
  void seen(uint16_t index, pp::SeenEntry& e) override {
    e.element = index;
    e.tag = pp::SeenLampState;
    e.value = lamp;
  }
};

struct ProbePort : pp::LinkPort {
  uint16_t writable() override { return (UCSR0A & _BV(UDRE0)) ? 1 : 0; }
  void write(const uint8_t* data, uint16_t) override { UDR0 = data[0]; }
};

char text[pp::kMaxTextBytes + 1];
pp::Channel channels[2];
ProbePanel panel;
ProbePort port;
const pp::DeviceConfig config = {0, false, {1, 2, 3, 4, 5, 6, 7, 8}, {1, 0, 0}, "probe", 1000, 20, 1750, clockMs, clockUs, 0};
pp::LinkDeviceWith<1, 0> device(config, panel, port, channels, 2);

}  // namespace

int main() {
  channels[0] = pp::channel(pp::kAcceptBoolean | pp::kAcceptNumber);
  channels[1] = pp::textChannel(text);
  UCSR0B = _BV(RXEN0) | _BV(TXEN0);
  device.begin();
  for (;;) {
    if (UCSR0A & _BV(RXC0)) device.receive(UDR0);
    device.update();
  }
}
#endif
