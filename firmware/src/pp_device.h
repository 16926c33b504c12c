// The device side of the link: what a panel's board does with each frame from the bench
// (docs/link-protocol.md), with the panel itself plugged in behind the Panel interface.
//
// Memory is fixed at build time: one receive buffer (254 bytes), one transmit buffer (256),
// a short queue of what to send next, and per element / input what was last reported. Reports
// are built when they are sent, from what the panel shows at that moment, so a queued report
// never holds stale bytes and never needs a buffer of its own.
#pragma once

#include "pp_codec.h"
#include "pp_protocol.h"
#include "pp_receiver.h"

// Build with PP_FLOAT_VALUES=0 on a board that should not link float code: float values are
// then refused (unsupported_value) and the hello says so, so the bench sends ints instead.
#ifndef PP_FLOAT_VALUES
#define PP_FLOAT_VALUES 1
#endif

namespace pp {

// One channel the panel is built for, in the panel definition's order. The sketch declares the
// table (so it can size text storage per channel); the link fills in values.
struct Channel {
  uint8_t accepts;  // kAccept* bits: the value kinds this channel takes
  uint8_t tag;      // kind of the value held (ValueTag), 0 while the channel has no value
  union {
    int32_t i;  // boolean 0/1, int, enum index
    float f;
  } v;
  char* text;  // text channels: kMaxTextBytes + 1 bytes, kept NUL-terminated

  bool known() const { return tag != 0; }
  // Booleans and enums as themselves, ints as is, floats rounded to the nearest integer.
  int32_t asInt() const;
#if PP_FLOAT_VALUES
  float asFloat() const;
#endif
  // True for a true boolean or a non-zero number.
  // A float is non-zero unless all its bits but the sign are clear (+0 and -0): tested on the
  // bits, so a lamp channel costs no float comparison.
  bool isOn() const { return known() && (tag == ValueFloat ? ((uint32_t)v.i << 1) != 0 : v.i != 0); }
};

// Channel table entries: `pp::channel(pp::kAcceptBoolean)`, `pp::textChannel(buffer)`.
inline Channel channel(uint8_t accepts) {
  Channel c;
  c.accepts = accepts;
  c.tag = 0;
  c.v.i = 0;
  c.text = 0;
  return c;
}
inline Channel textChannel(char* storage, uint8_t alsoAccepts = 0) {
  Channel c = channel(kAcceptText | alsoAccepts);
  c.text = storage;
  storage[0] = 0;
  return c;
}

// What the link asks of the panel. Indices are the panel definition's order.
class Panel {
 public:
  virtual uint16_t elementCount() const = 0;
  virtual uint8_t inputCount() const { return 0; }
  // Channel values changed (a delta was applied, or a keyframe completed): drive the outputs
  // toward them. Never called while a keyframe is half received.
  virtual void follow(const Channel* channels, uint16_t count) = 0;
  // Reset from the bench: lamps off, pointers parked, readouts blank.
  virtual void rest() = 0;
  // What element `index` shows now, as the board can tell (pins read back, steps counted),
  // not what it was asked to show: that difference is what the bench is looking for.
  // Readout text stays owned by the panel and must live until the next call.
  virtual void seen(uint16_t index, SeenEntry& out) = 0;
  // Input `index` (0..inputCount-1) now; out.element is its element index. Detents are the
  // turns since the last inputSent() for it.
  virtual void input(uint8_t index, InputEntry& out) {
    (void)index;
    out.tag = 0;
  }
  // An input entry went out on the link (for detents: subtract what was sent).
  virtual void inputSent(uint8_t index, const InputEntry& sent) {
    (void)index;
    (void)sent;
  }
};

// Where frames go: a UART, an RS-485 transceiver (switch its driver on in write()), a socket.
class LinkPort {
 public:
  // Bytes write() can take now without blocking. A frame may go out in several pieces (a UART
  // ring of 64 bytes is enough); frames never interleave.
  virtual uint16_t writable() = 0;
  virtual void write(const uint8_t* data, uint16_t length) = 0;
};

struct DeviceConfig {
  uint8_t address;        // 1..247 on an RS-485 bus, 0 on a direct link
  bool waitsForPoll;      // on a bus: talk only when spoken to, exactly once per addressed frame
  uint8_t deviceId[8];    // chip serial, MAC padded with zeros, or builder-chosen
  uint8_t firmware[3];    // major, minor, patch
  const char* panel;      // panel identifier, at most 32 bytes of UTF-8
  uint16_t heartbeatMs;   // a heartbeat at least this often (the protocol wants <= 1000 on a direct link)
  uint16_t scanMs;        // how often elements and inputs are compared with what was last reported
  uint16_t answerDelayUs; // on a bus: line silence before answering (1750 us above 19,200 baud)
  uint32_t (*millis)();
  uint32_t (*micros)();
  uint16_t (*freeMemory)();  // may be null: the heartbeat then says "cannot tell"
};

struct Counters {
  uint16_t received;  // frames accepted
  uint16_t badCrc;
  uint16_t truncated;
  uint16_t oversized;
  uint16_t rejected;  // good CRC, refused: version, address, type or payload
  uint16_t dropped;   // messages the device could not queue
  uint16_t ignored;   // good frames not for this device (other addresses, other devices' answers)
  uint16_t missed;    // bench frames lost, from gaps in the bench's sequence numbers
};

// What was last reported for one element or input (tag 0xff: report it next time whatever it shows).
struct ElementMemo {
  uint8_t tag;
  int32_t value;
};
struct InputMemo {
  uint8_t tag;
  uint16_t value;
};

class LinkDevice {
 public:
  LinkDevice(const DeviceConfig& config, Panel& panel, LinkPort& port, Channel* channels, uint16_t channelCount,
             ElementMemo* elements, uint16_t elementCount, InputMemo* inputs, uint8_t inputCount);

  // Power-up: a direct-link device introduces itself; a bus device waits to be asked.
  void begin();
  // One byte from the link. Frames are handled as their last byte arrives.
  void receive(uint8_t byte);
  // Call from loop(): sends what is due (answers, reports, heartbeats) without blocking.
  void update();

  const Channel& channelAt(uint16_t index) const { return channels_[index]; }
  uint16_t channelCount() const { return channelCount_; }
  const Counters& counters() const { return counters_; }
  // Inside a keyframe split over several frames: outputs hold still until its end.
  bool holding() const { return inKeyframe_; }
  bool hasAppliedSequence() const { return hasApplied_; }
  uint8_t appliedSequence() const { return applied_; }
  // Last error the bench sent us (ErrNone if none), for a sketch that wants to show it.
  uint8_t lastBenchError() const { return lastBenchError_; }
  uint16_t lastBenchErrorSubject() const { return lastBenchErrorSubject_; }

 private:
  enum Kind : uint8_t { KindHello = 1, KindError, KindInputs, KindSeen, KindHeartbeat };
  struct Pending {
    uint8_t kind;
    uint8_t code;
    uint16_t subject;
  };
  static const uint8_t kQueueSize = 8;

  DeviceConfig config_;
  Panel& panel_;
  LinkPort& port_;
  Channel* channels_;
  uint16_t channelCount_;
  ElementMemo* elements_;
  uint16_t elementCount_;
  InputMemo* inputs_;
  uint8_t inputCount_;

  FrameReceiver receiver_;
  uint8_t tx_[kMaxWireBytes];
  uint16_t txLength_;  // a sealed frame not yet fully handed to the port, 0 if none
  uint16_t txOffset_;  // how much of it the port already took
  uint8_t txType_;     // its type byte (tx_ holds it stuffed)
  Pending queue_[kQueueSize];
  uint8_t queueHead_;
  uint8_t queueLength_;
  uint16_t droppedUnreported_;

  Counters counters_;
  uint8_t sequence_;
  bool hasApplied_;
  uint8_t applied_;
  bool inKeyframe_;
  bool heardBench_;
  uint8_t lastBenchSequence_;
  uint8_t lastBenchError_;
  uint16_t lastBenchErrorSubject_;
  bool answerDue_;
  uint32_t answerAtUs_;
  uint32_t lastHeartbeatMs_;
  uint32_t lastScanMs_;
  // When every element was last asked what it shows: by the change scan, or by a seen report
  // that went through all of them (which makes the scan due again only scanMs after it).
  uint32_t lastLookMs_;
  uint16_t seenCursor_;

  static void bump(uint16_t& counter) {
    if (counter != 0xffff) counter++;
  }
  bool bus() const { return config_.waitsForPoll; }
  uint8_t ownAddress() const { return config_.address; }

  void handleFrame();
  void countFault(Fault fault);
  void applyValueUpdate(const Frame& frame);
  void forgetValues();
  void enqueue(uint8_t kind, uint8_t code = 0, uint16_t subject = 0);
  void enqueueFirst(uint8_t kind);
  bool queued(uint8_t kind) const;
  void clearQueue();
  bool anyElementChanged();
  bool anyInputChanged();
  void forceElements();
  void forceInputs();
  // Builds the next frame into tx_ (one of the queue's, or on a bus a seen report when the
  // queue is empty) and returns its wire length, 0 if there was nothing to send.
  uint16_t buildNext(bool answerOnBus);
  bool buildSeen();
  bool buildInputs(bool& more);
  void buildError(uint8_t code, uint16_t subject);
  void send();
  void flush();
};

// The same device with its per-element and per-input memory sized at compile time.
template <uint16_t Elements, uint8_t Inputs>
class LinkDeviceWith : public LinkDevice {
 public:
  LinkDeviceWith(const DeviceConfig& config, Panel& panel, LinkPort& port, Channel* channels, uint16_t channelCount)
      : LinkDevice(config, panel, port, channels, channelCount, elementMemo_, Elements, inputMemo_, Inputs) {}

 private:
  ElementMemo elementMemo_[Elements];
  InputMemo inputMemo_[Inputs > 0 ? Inputs : 1];
};

}  // namespace pp
