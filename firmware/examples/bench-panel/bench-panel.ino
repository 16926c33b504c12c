// bench-panel: one small panel on an Arduino Mega 2560 (ATmega2560), linked to the Panelproof
// bench over USB serial at 115,200 baud. A starting point for your own panels: replace the
// channel and element tables and the pins, keep the shape.
//
// Its panel definition is bench-panel.panel.json beside this file (the invented Marlin TX-2's
// channels). The bench numbers channels in the order the definition's elements first bind them,
// so the table below follows that order (docs/panel-format.md):
//   0 gear.unsafe_lamp            boolean -> lamp GEAR UNSAFE
//   1 annun.test                  boolean -> every lamp on while true (lamp test)
//   2 annun.low_fuel_l            boolean -> lamp FUEL LOW
//   3 annun.master_caution_lamp   enum    -> lamp MASTER CAUTION: 0 OFF, 1 STEADY, 2 FLASHING (boolean accepted too)
//   4 hyd.pressure_psi            number  -> pointer, 0..3000 psi over 0..270 degrees
//   5 fuel.qty_lb                 number/text -> 8-digit seven-segment readout (MAX7219), right-aligned
//   6 elec.master                 the BATTERY switch's position as the aircraft has it (the hand sets the switch)
//   7 lights.landing              the LANDING LIGHTS switch's position (likewise)
//   8 cb.pitot_heat               boolean -> the breaker trips (its trip lamp, latched until pulled)
//   9 cb.pulled.pitot_heat        the breaker pulled by hand (likewise)
//  10 elec.panel_dimmer_pct       number 0..100 -> backlight level (PWM)
// Elements (what the board reports it shows):
//   0..2 the three lamps, 3 the pointer, 4 the readout, 5 switch BATTERY (off, on),
//   6 switch LANDING LIGHTS (off, taxi, land), 7 the breaker (in, pulled, tripped), 8 backlight.
// Inputs: the two switches and the breaker (pulling it), as position events.
//
// Build flags: PANEL_FAULT_INVERT_LAMP=1 wires FUEL LOW inverted in software (a deliberate fault
// for testing the tester); PANEL_SPARE_LAMPS=N adds N lamps on channels 11.. (31 make the
// benchmark's 40-element panel).
//
// Wiring and electrical cautions: firmware/README.md.

#include <Arduino.h>
#include <PanelproofLink.h>
#include <pp_marks.h>
#include <util/atomic.h>

#ifndef PANEL_FAULT_INVERT_LAMP
#define PANEL_FAULT_INVERT_LAMP 0
#endif
#ifndef PANEL_SPARE_LAMPS
#define PANEL_SPARE_LAMPS 0
#endif

// ---- the panel definition ----------------------------------------------------------------------

enum : uint8_t {
  ChGearUnsafe, ChLampTest, ChFuelLow, ChMasterCaution, ChHydPressure, ChFuelQty,
  ChBatterySwitch, ChLandingLights, ChBreakerTripped, ChBreakerPulled, ChPanelDimmer, ChFirstSpare
};
enum : uint8_t { ElGearUnsafe, ElFuelLow, ElMasterCaution, ElPointer, ElReadout, ElBattery, ElLandingLights, ElBreaker, ElBacklight, ElFirstSpare };

const uint8_t kChannels = ChFirstSpare + PANEL_SPARE_LAMPS;
const uint8_t kElements = ElFirstSpare + PANEL_SPARE_LAMPS;
const uint8_t kInputs = 3;

// Lamps drive through a transistor or LED driver: the pin only switches it (README).
const uint8_t kLampPins[3] = {22, 23, 24};  // PA0..PA2
const uint8_t kTripLampPin = 25;            // PA3
const uint8_t kBacklightPin = 13;           // PB7, PWM from timer 0
// Stepper driver (A4988/DRV8825 style): STEP and DIR, active-low ENABLE.
#define STEP_PORT PORTA
#define STEP_BIT 4  // pin 26
#define DIR_BIT 5   // pin 27
#define ENABLE_BIT 6  // pin 28
// MAX7219 readout, bit-banged on the SPI pins (so hardware SPI is a drop-in later).
#define MAX_PORT PORTB
#define MAX_LOAD_BIT 0  // pin 53
#define MAX_CLK_BIT 1   // pin 52
#define MAX_DIN_BIT 2   // pin 51
// Inputs to ground with the internal pull-ups: a closed contact reads 0.
const uint8_t kBatteryPin = 37;   // PC0: closed = on
const uint8_t kTaxiPin = 36;      // PC1: ON-OFF-ON switch, one side
const uint8_t kLandPin = 35;      // PC2: the other side
const uint8_t kBreakerPin = 34;   // PC3: closed while the breaker is pushed in

#if PANEL_SPARE_LAMPS
const uint8_t kSparePins[32] = {30, 31, 32, 33, 38, 39, 40, 41, 42, 43, 44, 45, 46, 47, 48, 49,
                                54, 55, 56, 57, 58, 59, 60, 61, 62, 63, 64, 65, 66, 67, 68, 69};
static_assert(PANEL_SPARE_LAMPS <= 32, "at most 32 spare lamps on this board");
#endif

// ---- pins by port register -------------------------------------------------------------------------

// digitalRead and digitalWrite look a pin's port up in flash tables on every call (about 60
// cycles); a panel that reads 40 lamps back for every report cannot afford that. A pin is looked
// up once, into its input register and bit mask; on the ATmega2560 every port's PINx, DDRx and
// PORTx registers follow one another, so the output register is two past the input one.
struct FastPin {
  volatile uint8_t* in;
  uint8_t mask;
  void attach(uint8_t pin) {
    in = portInputRegister(digitalPinToPort(pin));
    mask = digitalPinToBitMask(pin);
  }
  // The level at the pin itself (what the driver really sees), as digitalRead reports it.
  bool high() const { return (*in & mask) != 0; }
  // Read-modify-write with interrupts held off, as digitalWrite does: an interrupt (the stepper's)
  // may write other bits of the same port.
  void write(bool on) const {
    volatile uint8_t* out = in + 2;
    const uint8_t sreg = SREG;
    cli();
    if (on) *out |= mask; else *out &= (uint8_t)~mask;
    SREG = sreg;
  }
};

// ---- the pointer: an acceleration-limited stepper on a timer interrupt ----------------------------

// Instrument micro steppers move about 1/3 degree per full step (from memory): 3 steps per degree.
const int32_t kStepsPerDegree = 3;
const int32_t kSweepSteps = 270 * kStepsPerDegree;  // 0..3000 psi over 270 degrees
const int32_t kHomingSteps = kSweepSteps + 40;      // against the stop from anywhere, with margin
const uint32_t kMaxSpeed = 1200;                    // steps/s
const uint32_t kAccel = 6000;                       // steps/s^2
const uint32_t kTimerHz = 2000000;                  // timer 1 at 16 MHz / 8
const uint16_t kHomingTicks = 2000;                 // 1,000 steps/s while homing
const uint16_t kIdleTicks = 2000;                   // 1 ms: look for a new target

// Written in the interrupt, read with interrupts off in loop().
static volatile int32_t pointerSteps = 0;
static volatile int32_t pointerTarget = 0;
static volatile int16_t homingLeft = kHomingSteps;
static uint32_t speedSquared = 0;  // interrupt only: (steps/s)^2
static int8_t direction = 0;

static uint16_t isqrt32(uint32_t n) {
  uint32_t root = 0, bit = 1UL << 30;
  while (bit > n) bit >>= 2;
  while (bit) {
    if (n >= root + bit) {
      n -= root + bit;
      root = (root >> 1) + bit;
    } else {
      root >>= 1;
    }
    bit >>= 2;
  }
  return (uint16_t)root;
}

static inline void stepPulseHigh(int8_t dir) {
  if (dir > 0) STEP_PORT |= _BV(DIR_BIT); else STEP_PORT &= ~_BV(DIR_BIT);
  STEP_PORT |= _BV(STEP_BIT);
}

// One step per compare match; the next interval follows v^2 = v0^2 + 2as, so speed ramps up and
// down at constant acceleration with one square root per step and no floating point. Runs with
// interrupts enabled (ISR_NOBLOCK) so serial reception is never held up by the arithmetic.
ISR(TIMER1_COMPA_vect, ISR_NOBLOCK) {
  if (homingLeft > 0) {
    stepPulseHigh(-1);
    homingLeft = homingLeft - 1;
    if (homingLeft == 0) pointerSteps = 0;
    OCR1A = kHomingTicks;
    STEP_PORT &= ~_BV(STEP_BIT);
    return;
  }
  const int32_t target = pointerTarget;
  int32_t position = pointerSteps;
  if (speedSquared == 0) {
    if (position == target) {
      OCR1A = kIdleTicks;
      return;
    }
    direction = target > position ? 1 : -1;
    if (direction > 0) STEP_PORT |= _BV(DIR_BIT); else STEP_PORT &= ~_BV(DIR_BIT);
    speedSquared = 2 * kAccel;
  }
  stepPulseHigh(direction);
  position += direction;
  pointerSteps = position;
  const int32_t ahead = (target - position) * direction;  // steps left in this direction
  if (ahead > 0 && speedSquared < (uint32_t)ahead * 2 * kAccel) {
    speedSquared += 2 * kAccel;
    if (speedSquared > kMaxSpeed * kMaxSpeed) speedSquared = kMaxSpeed * kMaxSpeed;
  } else {
    speedSquared = speedSquared > 2 * kAccel ? speedSquared - 2 * kAccel : 0;
  }
  // Arrived (or past it and slow): stop; a reversal starts from rest on the next tick.
  if (ahead <= 0 && speedSquared <= 4 * kAccel) speedSquared = 0;
  // The arithmetic above took well over the driver's 1 us minimum pulse.
  STEP_PORT &= ~_BV(STEP_BIT);
  OCR1A = speedSquared ? (uint16_t)(kTimerHz / isqrt32(speedSquared)) : kIdleTicks;
}

static void pointerBegin() {
  DDRA |= _BV(STEP_BIT) | _BV(DIR_BIT) | _BV(ENABLE_BIT);
  STEP_PORT &= ~(_BV(STEP_BIT) | _BV(ENABLE_BIT));  // driver enabled
  TCCR1A = 0;
  TCCR1B = _BV(WGM12) | _BV(CS11);  // CTC, clk/8
  OCR1A = kHomingTicks;
  TIMSK1 |= _BV(OCIE1A);
}

static void pointerMoveTo(int32_t steps) {
  if (steps < 0) steps = 0;
  if (steps > kSweepSteps) steps = kSweepSteps;
  ATOMIC_BLOCK(ATOMIC_RESTORESTATE) { pointerTarget = steps; }
}

// ---- the readout: MAX7219 in code-B decode mode ------------------------------------------------

static char shown[9] = "        ";  // what the display's digit registers hold, leftmost first

static void maxSend(uint8_t reg, uint8_t data) {
  const uint16_t word = ((uint16_t)reg << 8) | data;
  MAX_PORT &= ~_BV(MAX_LOAD_BIT);
  for (int8_t bit = 15; bit >= 0; bit--) {
    if (word & (1u << bit)) MAX_PORT |= _BV(MAX_DIN_BIT); else MAX_PORT &= ~_BV(MAX_DIN_BIT);
    MAX_PORT |= _BV(MAX_CLK_BIT);
    MAX_PORT &= ~_BV(MAX_CLK_BIT);
  }
  MAX_PORT |= _BV(MAX_LOAD_BIT);  // the chip latches the 16 bits on this rising edge
}

// Code B has digits, '-', 'E', 'H', 'L', 'P' and blank; anything else shows blank, and the seen
// report says so (the bench then sees exactly what the glass shows).
static uint8_t codeB(char c) {
  if (c >= '0' && c <= '9') return (uint8_t)(c - '0');
  switch (c) {
    case '-': return 0x0a;
    case 'E': case 'e': return 0x0b;
    case 'H': case 'h': return 0x0c;
    case 'L': case 'l': return 0x0d;
    case 'P': case 'p': return 0x0e;
    default: return 0x0f;
  }
}
static char fromCodeB(uint8_t code) {
  static const char glyphs[] = "0123456789-EHLP ";
  return glyphs[code & 0x0f];
}

static void readoutBegin() {
  DDRB |= _BV(MAX_LOAD_BIT) | _BV(MAX_CLK_BIT) | _BV(MAX_DIN_BIT);
  MAX_PORT |= _BV(MAX_LOAD_BIT);
  maxSend(0x0f, 0);     // display test off
  maxSend(0x09, 0xff);  // code B on all digits
  maxSend(0x0a, 0x08);  // intensity: half
  maxSend(0x0b, 7);     // scan all eight digits
  for (uint8_t digit = 1; digit <= 8; digit++) maxSend(digit, 0x0f);
  maxSend(0x0c, 1);     // leave shutdown
}

static void readoutShow(const char* text) {
  for (uint8_t k = 0; k < 8; k++) {
    const uint8_t code = codeB(text[k]);
    const char glyph = fromCodeB(code);
    if (glyph == shown[k]) continue;  // only changed digits go over the wire
    maxSend((uint8_t)(8 - k), code);  // digit register 1 is the rightmost digit
    shown[k] = glyph;
  }
}

// ---- the panel behind the link ---------------------------------------------------------------------

class BenchPanel : public pp::Panel {
 public:
  uint16_t elementCount() const override { return kElements; }
  uint8_t inputCount() const override { return kInputs; }

  void begin() {
    for (uint8_t i = 0; i < 3; i++) {
      pinMode(kLampPins[i], OUTPUT);
      lamps_[i].attach(kLampPins[i]);
    }
    pinMode(kTripLampPin, OUTPUT);
    tripLamp_.attach(kTripLampPin);
    pinMode(kBacklightPin, OUTPUT);
#if PANEL_SPARE_LAMPS
    for (uint8_t i = 0; i < PANEL_SPARE_LAMPS; i++) {
      pinMode(kSparePins[i], OUTPUT);
      spares_[i].attach(kSparePins[i]);
    }
#endif
    pinMode(kBatteryPin, INPUT_PULLUP);
    pinMode(kTaxiPin, INPUT_PULLUP);
    pinMode(kLandPin, INPUT_PULLUP);
    pinMode(kBreakerPin, INPUT_PULLUP);
    battery_.attach(kBatteryPin);
    taxi_.attach(kTaxiPin);
    land_.attach(kLandPin);
    breaker_.attach(kBreakerPin);
    rest();
    for (uint8_t i = 0; i < kInputs; i++) stable_[i] = readRaw(i);
  }

  void follow(const pp::Channel* c, uint16_t) override {
    const bool test = c[ChLampTest].isOn();
    lampWanted_[0] = test || c[ChGearUnsafe].isOn();
    lampWanted_[1] = test || c[ChFuelLow].isOn();
    const int32_t caution = c[ChMasterCaution].known() ? c[ChMasterCaution].asInt() : 0;
    lampWanted_[2] = test || caution != 0;
    flashing_ = !test && caution == 2;
    // The breaker trips when the aircraft says so and stays tripped when the fault clears, as a
    // real one stays popped, until it is pulled and pushed in (docs/behaviours.md). Its trip lamp
    // shows that latch; the lamp test leaves it alone, since it says where the breaker is.
    tripCommanded_ = c[ChBreakerTripped].isOn();
    if (tripCommanded_ && !stable_[2]) tripLatched_ = true;
#if PANEL_SPARE_LAMPS
    for (uint8_t i = 0; i < PANEL_SPARE_LAMPS; i++) spares_[i].write(test || c[ChFirstSpare + i].isOn());
#endif
    driveLamps(millis());

    // Pointer: psi on a linear scale; an unknown value parks the needle.
    int32_t steps = 0;
    const pp::Channel& p = c[ChHydPressure];
    if (p.tag == pp::ValueFloat) steps = (int32_t)(p.v.f * (float)kSweepSteps / 3000.0f + 0.5f);
    else if (p.known()) steps = (p.asInt() * kSweepSteps + 1500) / 3000;
    pointerMoveTo(steps);

    char text[9];
    formatReadout(c[ChFuelQty], text);
    readoutShow(text);

    // The dimmer is a percentage; the PWM level is 0..255, rounded as the bench rounds it.
    const pp::Channel& d = c[ChPanelDimmer];
    int32_t level = 0;
    if (d.tag == pp::ValueFloat) level = (int32_t)(d.v.f * 255.0f / 100.0f + 0.5f);
    else if (d.known()) level = (d.asInt() * 255 + 50) / 100;
    backlight_ = (uint8_t)constrain(level, 0, 255);
    analogWrite(kBacklightPin, backlight_);
  }

  void rest() override {
    for (uint8_t i = 0; i < 3; i++) lampWanted_[i] = false;
    flashing_ = false;
    tripCommanded_ = false;
    tripLatched_ = false;
#if PANEL_SPARE_LAMPS
    for (uint8_t i = 0; i < PANEL_SPARE_LAMPS; i++) spares_[i].write(false);
#endif
    driveLamps(millis());
    pointerMoveTo(0);
    readoutShow("        ");
    backlight_ = 0;
    analogWrite(kBacklightPin, 0);
  }

  // Lamps report what their pins actually drive (read back from the port), so a wiring or
  // logic fault shows up as a difference; a flashing lamp reports the flashing it is doing.
  void seen(uint16_t index, pp::SeenEntry& e) override {
    e.element = index;
    switch (index) {
      case ElGearUnsafe:
      case ElFuelLow:
      case ElMasterCaution:
        e.tag = pp::SeenLampState;
        e.value = (index == ElMasterCaution && flashing_) ? pp::LampFlashing : (lamps_[index].high() ? pp::LampOn : pp::LampOff);
        break;
      case ElPointer: {
        int16_t homing;
        ATOMIC_BLOCK(ATOMIC_RESTORESTATE) { homing = homingLeft; }
        if (homing > 0) {
          e.tag = pp::SeenUnknown;  // not homed yet: the needle's place is not known
          break;
        }
        int32_t steps;
        ATOMIC_BLOCK(ATOMIC_RESTORESTATE) { steps = pointerSteps; }
        e.tag = pp::SeenPointerAngle;
        // A 32-bit division costs about 600 cycles and the link asks for every report: work the
        // angle out again only when the needle has moved.
        if (steps != angleOfSteps_) {
          angleOfSteps_ = steps;
          angle_ = steps * 100 / kStepsPerDegree;
        }
        e.value = angle_;
        break;
      }
      case ElReadout: {
        // All eight digits as the glass shows them, blanks included (the definition's format has
        // width 8, so the bench expects "    1250"); a wholly blank display is the empty text.
        uint8_t lit = 0;
        for (uint8_t k = 0; k < 8; k++) lit |= shown[k] != ' ';
        e.tag = pp::SeenReadout;
        e.text = shown;
        e.textLength = lit ? 8 : 0;
        break;
      }
      case ElBattery:
      case ElLandingLights:
        e.tag = pp::SeenSwitch;
        e.value = stable_[index - ElBattery];
        break;
      case ElBreaker:
        e.tag = pp::SeenBreaker;
        e.value = stable_[2] ? pp::BreakerPulled : (tripLamp_.high() ? pp::BreakerTripped : pp::BreakerIn);
        break;
      case ElBacklight:
        e.tag = pp::SeenLampLevel;
        e.value = backlight_;
        break;
      default:
#if PANEL_SPARE_LAMPS
        e.tag = pp::SeenLampState;
        e.value = spares_[index - ElFirstSpare].high() ? pp::LampOn : pp::LampOff;
#else
        e.tag = pp::SeenUnknown;
#endif
    }
  }

  void input(uint8_t index, pp::InputEntry& e) override {
    static const uint8_t elements[kInputs] = {ElBattery, ElLandingLights, ElBreaker};
    e.element = elements[index];
    e.tag = pp::InputPosition;
    e.value = stable_[index];
  }

  // Called from loop(): flashing and debouncing.
  void tick(uint32_t nowMs) {
    if (flashing_) driveLamps(nowMs);
    if ((uint32_t)(nowMs - lastDebounceMs_) >= 5) {
      lastDebounceMs_ = nowMs;
      for (uint8_t i = 0; i < kInputs; i++) {
        const uint8_t raw = readRaw(i);
        // A contact must read the same three times, 5 ms apart, before it counts as moved.
        if (raw != candidate_[i]) {
          candidate_[i] = raw;
          count_[i] = 0;
        } else if (raw != stable_[i] && ++count_[i] >= 3) {
          stable_[i] = raw;
          if (i == 2) breakerMoved(nowMs);
        }
      }
    }
  }

 private:
  bool lampWanted_[3] = {false, false, false};
  bool tripCommanded_ = false;  // what the aircraft says now
  bool tripLatched_ = false;    // what the breaker shows: tripped until pulled and pushed in
  bool flashing_ = false;
  uint8_t backlight_ = 0;
  uint8_t stable_[kInputs] = {0, 0, 0};
  uint8_t candidate_[kInputs] = {0, 0, 0};
  uint8_t count_[kInputs] = {0, 0, 0};
  uint32_t lastDebounceMs_ = 0;

  // Pulling a tripped breaker resets it; pushing it in while the fault is still there trips it
  // again at once.
  void breakerMoved(uint32_t nowMs) {
    tripLatched_ = stable_[2] ? false : tripCommanded_;
    driveLamps(nowMs);
  }

  // Lamps are read back from the pin (FastPin::high), not from lampWanted_: with the injected
  // fault the board reports the lamp it really lights, and the bench finds the difference on
  // exactly that element.
  int32_t angleOfSteps_ = 0;  // the needle's steps when angle_ was worked out
  int32_t angle_ = 0;         // centidegrees
  FastPin lamps_[3];
  FastPin tripLamp_;
  FastPin battery_, taxi_, land_, breaker_;
#if PANEL_SPARE_LAMPS
  FastPin spares_[PANEL_SPARE_LAMPS];
#endif

  void driveLamps(uint32_t nowMs) {
    for (uint8_t i = 0; i < 3; i++) {
      bool on = lampWanted_[i];
      if (i == ElMasterCaution && flashing_) on = (nowMs / 250) % 2 == 0;  // 2 Hz, half on
#if PANEL_FAULT_INVERT_LAMP
      if (i == ElFuelLow) on = !on;  // the injected fault: this lamp is driven inverted
#endif
      lamps_[i].write(on);
    }
    tripLamp_.write(tripLatched_);
  }

  // Position index of input `index` from its contacts.
  uint8_t readRaw(uint8_t index) const {
    switch (index) {
      case 0: return battery_.high() ? 0 : 1;
      case 1: return !taxi_.high() ? 1 : (!land_.high() ? 2 : 0);
      default: return breaker_.high() ? 1 : 0;  // open contact: pulled
    }
  }

  static void formatReadout(const pp::Channel& c, char* out) {
    memset(out, ' ', 8);
    out[8] = 0;
    if (c.tag == pp::ValueText) {
      // Text right-aligned, as the definition's format shows it; longer text keeps its first
      // eight characters.
      const uint8_t n = (uint8_t)strnlen(c.text, 8);
      memcpy(out + 8 - n, c.text, n);
      return;
    }
    if (!c.known()) return;
    // Numbers rounded half away from zero (asInt), as the bench's format does with 0 decimals.
    char digits[12];
    ltoa(c.asInt(), digits, 10);
    const uint8_t n = strlen(digits);
    if (n > 8) {
      memset(out, '-', 8);  // does not fit: dashes, as instruments do
      return;
    }
    memcpy(out + 8 - n, digits, n);  // right-aligned
  }
};

// ---- the link ----------------------------------------------------------------------------------------

// UART0 (the USB serial port) with its own two small interrupt handlers instead of the Arduino
// core's Serial: the core's handlers cost about 120 cycles a byte each way (a call through the
// Serial object, 16-bit ring indices, parity checks), a third of the link's CPU at the full line
// rate. Here the receive handler only stores the byte (a 256-byte ring, so its 8-bit index wraps
// by itself) and the send handler only feeds the next one. Same line settings as Serial.begin:
// 115,200 baud, 8N1, double speed (UBRR 16: 117,647 baud, 2.1 % fast, as every Arduino sends).
// Do not use Serial in this sketch as well: both would claim UART0's interrupt vectors.
static volatile uint8_t rxRing[256];
static volatile uint8_t rxHead = 0;  // written by the interrupt
static volatile uint8_t rxTail = 0;  // written by loop()
const uint8_t kTxRingMask = 127;     // 128-byte ring: whole frames go out in a few pieces
static volatile uint8_t txRing[kTxRingMask + 1];
static volatile uint8_t txHead = 0;  // written by loop()
static volatile uint8_t txTail = 0;  // written by the interrupt

ISR(USART0_RX_vect) {
  const uint8_t byte = UDR0;
  const uint8_t head = rxHead;
  const uint8_t next = (uint8_t)(head + 1);
  // A full ring drops the byte; the frame it belonged to then fails its CRC and is counted.
  if (next != rxTail) {
    rxRing[head] = byte;
    rxHead = next;
  }
}

ISR(USART0_UDRE_vect) {
  const uint8_t tail = txTail;
  UDR0 = txRing[tail];
  const uint8_t next = (tail + 1) & kTxRingMask;
  txTail = next;
  if (next == txHead) UCSR0B &= (uint8_t)~_BV(UDRIE0);  // nothing more: quiet until write()
}

static void uartBegin() {
  UCSR0A = _BV(U2X0);
  UBRR0 = 16;  // (F_CPU / 4 / 115200 - 1) / 2, as the Arduino core computes it
  UCSR0C = _BV(UCSZ01) | _BV(UCSZ00);  // 8 data bits, no parity, 1 stop bit
  UCSR0B = _BV(RXEN0) | _BV(TXEN0) | _BV(RXCIE0);
}

class UartLinkPort : public pp::LinkPort {
 public:
  uint16_t writable() override { return (uint8_t)(kTxRingMask - ((txHead - txTail) & kTxRingMask)); }
  void write(const uint8_t* data, uint16_t length) override {
    // The library never hands over more than writable() said, so this never waits.
    uint8_t head = txHead;
    for (uint16_t i = 0; i < length; i++) {
      txRing[head] = data[i];
      head = (head + 1) & kTxRingMask;
    }
    // The interrupt may clear UDRIE0 between this read and write of UCSR0B (not a bit
    // instruction's register): hold it off for the two instructions.
    const uint8_t sreg = SREG;
    cli();
    txHead = head;
    UCSR0B |= _BV(UDRIE0);  // the send interrupt takes it from here
    SREG = sreg;
  }
};

// Free RAM between the heap (unused here) and the stack.
extern char __heap_start;
extern char* __brkval;
static uint16_t freeMemory() {
  char top;
  return (uint16_t)(&top - (__brkval ? __brkval : &__heap_start));
}

static char fuelQtyText[pp::kMaxTextBytes + 1];
static pp::Channel channels[kChannels];
static BenchPanel panel;
static UartLinkPort port;

static const pp::DeviceConfig config = {
    0,      // direct link over USB: no bus address
    false,  // talks whenever it has something to say
    {0x70, 0x61, 0x6e, 0x65, 0x6c, 0x00, 0x00, 0x01},  // builder-chosen device id
    {1, 0, 0},
    "bench-panel",
    1000,  // heartbeat every second
    20,    // look for changes (a moving needle) 50 times a second
    1750,  // bus turnaround at 115,200 baud (Modbus serial line guide V1.02)
    millis,
    micros,
    freeMemory,
};

static pp::LinkDeviceWith<kElements, kInputs> panelLink(config, panel, port, channels, kChannels);

void setup() {
  channels[ChGearUnsafe] = pp::channel(pp::kAcceptBoolean);
  channels[ChLampTest] = pp::channel(pp::kAcceptBoolean);
  channels[ChFuelLow] = pp::channel(pp::kAcceptBoolean);
  channels[ChMasterCaution] = pp::channel(pp::kAcceptEnum | pp::kAcceptBoolean);
  channels[ChHydPressure] = pp::channel(pp::kAcceptNumber);
  channels[ChFuelQty] = pp::textChannel(fuelQtyText, pp::kAcceptNumber);
  // Where the aircraft has the switches and the pulled breaker: the builder's hand sets them and
  // the board reports where they really are, so these are taken (never refused) and not used.
  const uint8_t anyPosition = pp::kAcceptBoolean | pp::kAcceptEnum | pp::kAcceptInt;
  channels[ChBatterySwitch] = pp::channel(anyPosition);
  channels[ChLandingLights] = pp::channel(anyPosition);
  channels[ChBreakerTripped] = pp::channel(pp::kAcceptBoolean);
  channels[ChBreakerPulled] = pp::channel(anyPosition);
  channels[ChPanelDimmer] = pp::channel(pp::kAcceptNumber);
  for (uint8_t i = ChFirstSpare; i < kChannels; i++) channels[i] = pp::channel(pp::kAcceptBoolean);

  uartBegin();
  panel.begin();
  readoutBegin();
  pointerBegin();
  panelLink.begin();
}

void loop() {
  // Read what has arrived, but not forever: outputs and reports get their turn every pass.
  // Taking a byte out of the receive ring counts as receiving it (PP_MARK: cycle counts).
  for (uint8_t n = 0; n < 64; n++) {
    const uint8_t tail = rxTail;
    if (tail == rxHead) break;  // looking is the idle loop's, not the link's
    PP_MARK(PP_MARK_RECEIVE);
    const uint8_t byte = rxRing[tail];
    rxTail = (uint8_t)(tail + 1);
    panelLink.receive(byte);
  }
  PP_MARK(PP_MARK_IDLE);
  panel.tick(millis());
  panelLink.update();
}
