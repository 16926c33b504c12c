#include "pp_device.h"

#include <string.h>

#include "pp_crc16.h"
#include "pp_marks.h"

#if defined(__AVR__)
#include <avr/pgmspace.h>
#define PP_FLASH PROGMEM
#define PP_FLASH_BYTE(p) pgm_read_byte(p)
#else
#define PP_FLASH
#define PP_FLASH_BYTE(p) (*(const uint8_t*)(p))
#endif

namespace pp {

int32_t Channel::asInt() const {
#if PP_FLOAT_VALUES
  if (tag == ValueFloat) return (int32_t)(v.f < 0 ? v.f - 0.5f : v.f + 0.5f);
#endif
  return tag == ValueText ? 0 : v.i;
}

#if PP_FLOAT_VALUES
float Channel::asFloat() const { return tag == ValueFloat ? v.f : (tag == ValueText ? 0.0f : (float)v.i); }
#endif

// Error texts for people, one after another, each ended by a NUL; index = error code - 1.
// Kept in flash on the AVR: RAM is the scarce thing there.
static const char kErrorTexts[] PP_FLASH =
    "bad CRC\0"
    "frame cut short\0"
    "frame too long\0"
    "unknown message type\0"
    "unknown protocol version\0"
    "reserved address\0"
    "payload does not parse\0"
    "no such channel\0"
    "no such element\0"
    "value kind not handled\0"
    "reports dropped\0";

static uint8_t errorText(uint8_t code, char* out) {
  const char* p = kErrorTexts;
  for (uint8_t skip = 1; skip < code; skip++) {
    while (PP_FLASH_BYTE(p)) p++;
    p++;
  }
  uint8_t length = 0;
  char c;
  while ((c = (char)PP_FLASH_BYTE(p + length)) != 0 && length < kMaxTextBytes) out[length++] = c;
  return length;
}

// Readouts are remembered by a fingerprint of their text, not the text: five bytes per
// element whatever it is. Length, first byte and CRC together make a missed change unlikely,
// and the next change or a keyframe reports it anyway.
static int32_t textFingerprint(const char* text, uint8_t length) {
  const uint16_t crc = crc16Modbus((const uint8_t*)text, length);
  return (int32_t)(((uint32_t)length << 24) | ((uint32_t)(length ? (uint8_t)text[0] : 0) << 16) | crc);
}

static int32_t seenFingerprint(const SeenEntry& e) {
  return e.tag == SeenReadout ? textFingerprint(e.text, e.textLength) : e.value;
}

static const uint8_t kForce = 0xff;

LinkDevice::LinkDevice(const DeviceConfig& config, Panel& panel, LinkPort& port, Channel* channels,
                       uint16_t channelCount, ElementMemo* elements, uint16_t elementCount, InputMemo* inputs,
                       uint8_t inputCount)
    : config_(config),
      panel_(panel),
      port_(port),
      channels_(channels),
      channelCount_(channelCount),
      elements_(elements),
      elementCount_(elementCount),
      inputs_(inputs),
      inputCount_(inputCount),
      receiver_(kMaxFrameBytes) {
  // Memory is set up in begin(): with LinkDeviceWith the memo arrays are members of the
  // derived class and are not ours to touch before its constructor has run.
}

void LinkDevice::begin() {
  if (panel_.elementCount() < elementCount_) elementCount_ = panel_.elementCount();
  if (panel_.inputCount() < inputCount_) inputCount_ = panel_.inputCount();
  receiver_.reset();
  txLength_ = 0;
  txOffset_ = 0;
  txType_ = 0;
  queueHead_ = 0;
  queueLength_ = 0;
  droppedUnreported_ = 0;
  memset(&counters_, 0, sizeof counters_);
  sequence_ = 0;
  hasApplied_ = false;
  applied_ = 0;
  inKeyframe_ = false;
  heardBench_ = false;
  lastBenchSequence_ = 0;
  lastBenchError_ = ErrNone;
  lastBenchErrorSubject_ = 0;
  answerDue_ = false;
  answerAtUs_ = 0;
  seenCursor_ = 0;
  forgetValues();
  forceElements();
  forceInputs();
  const uint32_t now = config_.millis();
  lastHeartbeatMs_ = now;
  lastScanMs_ = now;
  lastLookMs_ = now;
  if (!bus()) {
    enqueue(KindHello);
    enqueue(KindInputs);
  }
}

void LinkDevice::forgetValues() {
  for (uint16_t i = 0; i < channelCount_; i++) {
    channels_[i].tag = 0;
    channels_[i].v.i = 0;
    if (channels_[i].text) channels_[i].text[0] = 0;
  }
}

void LinkDevice::forceElements() {
  for (uint16_t i = 0; i < elementCount_; i++) elements_[i].tag = kForce;
}

void LinkDevice::forceInputs() {
  for (uint8_t i = 0; i < inputCount_; i++) inputs_[i].tag = kForce;
}

// ---- the queue -----------------------------------------------------------------------------------

bool LinkDevice::queued(uint8_t kind) const {
  for (uint8_t n = 0; n < queueLength_; n++) {
    if (queue_[(queueHead_ + n) % kQueueSize].kind == kind) return true;
  }
  return false;
}

void LinkDevice::enqueue(uint8_t kind, uint8_t code, uint16_t subject) {
  // Hello, inputs, seen and heartbeat are built when sent, from the state at that moment, so
  // one of each in the queue says everything; only errors are separate events.
  if (kind != KindError && queued(kind)) return;
  if (queueLength_ == kQueueSize) {
    bump(counters_.dropped);
    if (droppedUnreported_ != 0xffff) droppedUnreported_++;
    return;
  }
  Pending& p = queue_[(queueHead_ + queueLength_) % kQueueSize];
  p.kind = kind;
  p.code = code;
  p.subject = subject;
  queueLength_++;
}

void LinkDevice::enqueueFirst(uint8_t kind) {
  if (queued(kind)) return;
  if (queueLength_ == kQueueSize) {
    // Make room by dropping the newest entry: the answer to the bench's question comes first.
    queueLength_--;
    bump(counters_.dropped);
  }
  queueHead_ = (uint8_t)((queueHead_ + kQueueSize - 1) % kQueueSize);
  queue_[queueHead_].kind = kind;
  queue_[queueHead_].code = 0;
  queue_[queueHead_].subject = 0;
  queueLength_++;
}

void LinkDevice::clearQueue() {
  queueHead_ = 0;
  queueLength_ = 0;
  // A frame already part way out must finish, or the bench would see it spliced to the next.
  if (txOffset_ == 0) txLength_ = 0;
}

// ---- receiving -----------------------------------------------------------------------------------

void LinkDevice::receive(uint8_t byte) {
  PP_MARK(PP_MARK_RECEIVE);
  const bool ended = receiver_.push(byte);
  if (ended) {
    PP_MARK(PP_MARK_FRAME);
    handleFrame();
  }
  PP_MARK(PP_MARK_IDLE);
}

void LinkDevice::countFault(Fault fault) {
  switch (fault) {
    case ErrBadCrc:
      bump(counters_.badCrc);
      break;
    case ErrTruncated:
      bump(counters_.truncated);
      break;
    case ErrOversized:
      bump(counters_.oversized);
      break;
    default:
      bump(counters_.rejected);
  }
}

void LinkDevice::handleFrame() {
  Fault fault = receiver_.fault();
  if (fault != FaultNone) {
    countFault(fault);
    // On a bus nobody knows whose frame the noise was: count only. On a direct link the
    // frame can only have been for us, so say what went wrong.
    if (!bus()) enqueue(KindError, fault, receiver_.wireBytes());
    return;
  }
  Frame frame;
  uint16_t subject;
  fault = checkHeader(receiver_.body(), receiver_.length(), frame, subject);
  if (fault != FaultNone) {
    countFault(fault);
    // A bad version or a reserved address leaves the header in doubt; on a bus only a frame
    // plainly from the bench and plainly to us gets an answer.
    const bool plainlyOurs = !(frame.type & kFromDevice) && frame.address != kAddressBroadcast &&
                             (frame.address == ownAddress() || frame.address == kAddressDirect);
    if (!bus()) {
      enqueue(KindError, fault, subject);
    } else if (plainlyOurs && fault == ErrUnknownType) {
      enqueue(KindError, fault, subject);
      answerDue_ = true;
      answerAtUs_ = config_.micros();
    }
    return;
  }
  // Our own echo, or other devices' answers on a shared pair: good frames, just not for us.
  if (frame.type & kFromDevice) {
    bump(counters_.ignored);
    return;
  }
  const bool broadcast = frame.address == kAddressBroadcast;
  if (!broadcast && frame.address != kAddressDirect && frame.address != ownAddress()) {
    bump(counters_.ignored);
    return;
  }
  const bool answer = !broadcast;
  if (checkPayload(frame) != FaultNone) {
    bump(counters_.rejected);
    // Nothing of a frame that does not parse is applied: state stays as it was.
    if (answer) enqueue(KindError, ErrBadPayload, frame.type);
  } else {
    bump(counters_.received);
    if (heardBench_) {
      const uint8_t gap = (uint8_t)(frame.sequence - lastBenchSequence_ - 1);
      const uint16_t before = counters_.missed;
      counters_.missed = (uint16_t)(before + gap);
      if (counters_.missed < before) counters_.missed = 0xffff;
    }
    heardBench_ = true;
    lastBenchSequence_ = frame.sequence;
    switch (frame.type) {
      case TypeIdentify:
        // Hello first (on a bus it is the answer to this frame, whatever else was waiting), then
        // every input's state: positions are state, so this repairs lost events.
        enqueueFirst(KindHello);
        forceInputs();
        forceElements();
        enqueue(KindInputs);
        break;
      case TypePoll:
        // On a bus the answer below is the turn; on a direct link a poll asks for a heartbeat.
        if (!bus()) enqueue(KindHeartbeat);
        break;
      case TypeReset:
        forgetValues();
        inKeyframe_ = false;
        hasApplied_ = false;
        applied_ = 0;
        clearQueue();
        panel_.rest();
        forceElements();
        break;
      case TypeValueUpdate:
        applyValueUpdate(frame);
        break;
      case TypeBenchError: {
        ErrorMessage e;
        if (readError(frame, e)) {
          lastBenchError_ = e.code;
          lastBenchErrorSubject_ = e.subject;
        }
        break;
      }
    }
  }
  if (answer && bus()) {
    answerDue_ = true;
    answerAtUs_ = config_.micros();
  }
}

void LinkDevice::applyValueUpdate(const Frame& frame) {
  // checkPayload has already read this payload whole (every entry's length, booleans 0 or 1,
  // floats finite, text valid UTF-8 and short enough, nothing left over), so the values are
  // taken straight from the bytes here, without a second round of bounds checks: at 40 values a
  // frame that second reading cost as much as the first.
  const uint8_t* at = frame.payload;
  const uint8_t flags = at[0];
  uint8_t count = at[1];
  at += 2;
  if (flags & kKeyframeBegin) {
    // A keyframe holds every channel: forget the old values first, so one missing from the
    // keyframe reads as unknown rather than stale.
    forgetValues();
    inKeyframe_ = true;
  }
  bool unknownChannel = false, unsupported = false;
  uint16_t unknownSubject = 0, unsupportedSubject = 0;
  for (; count; count--) {
    const uint16_t channel = (uint16_t)at[0] | ((uint16_t)at[1] << 8);
    const uint8_t tag = at[2];
    const uint8_t* value = at + 3;
    // Entry sizes as the protocol has them: 1 byte for booleans and enums, 4 for ints and
    // floats (little-endian, as both the AVR and the host store them), 1 + n for text.
    const uint8_t size = tag == ValueInt || tag == ValueFloat ? 4 : (tag == ValueText ? (uint8_t)(1 + value[0]) : 1);
    at = value + size;
    if (channel >= channelCount_) {
      if (!unknownChannel) unknownSubject = channel;
      unknownChannel = true;
      continue;
    }
    Channel& c = channels_[channel];
    bool takes = (c.accepts & (uint8_t)(1u << tag)) != 0;
#if !PP_FLOAT_VALUES
    if (tag == ValueFloat) takes = false;
#endif
    if (tag == ValueText && !c.text) takes = false;
    if (!takes) {
      if (!unsupported) unsupportedSubject = channel;
      unsupported = true;
      continue;
    }
    c.tag = tag;
    if (tag == ValueInt || tag == ValueFloat) {
      memcpy(&c.v, value, 4);  // an int32 or a float32's bits: the same four bytes either way
    } else if (tag == ValueText) {
      const uint8_t length = value[0];
      memcpy(c.text, value + 1, length);
      c.text[length] = 0;
      c.v.i = length;
    } else {
      c.v.i = value[0];
    }
  }
  if (flags & kKeyframeEnd) inKeyframe_ = false;
  hasApplied_ = true;
  applied_ = frame.sequence;
  if (unknownChannel) enqueue(KindError, ErrUnknownChannel, unknownSubject);
  if (unsupported) enqueue(KindError, ErrUnsupportedValue, unsupportedSubject);
  if (inKeyframe_) return;  // outputs hold until the keyframe's last frame: never a half state
  PP_MARK(PP_MARK_FOLLOW);
  panel_.follow(channels_, channelCount_);
  PP_MARK(PP_MARK_FRAME);
  if (flags & (kKeyframeBegin | kKeyframeEnd)) forceElements();
  // A direct link acknowledges every applied update with a report of what changed (possibly
  // nothing); on a bus the answer to this frame does the same.
  if (!bus()) enqueue(KindSeen);
}

// ---- sending -------------------------------------------------------------------------------------

bool LinkDevice::anyElementChanged() {
  SeenEntry e;
  for (uint16_t i = 0; i < elementCount_; i++) {
    if (elements_[i].tag == kForce) return true;
    e.element = i;
    e.text = 0;
    e.textLength = 0;
    e.value = 0;
    panel_.seen(i, e);
    if (e.tag != elements_[i].tag || seenFingerprint(e) != elements_[i].value) return true;
  }
  return false;
}

bool LinkDevice::anyInputChanged() {
  InputEntry e;
  for (uint8_t i = 0; i < inputCount_; i++) {
    if (inputs_[i].tag == kForce) return true;
    e.value = 0;
    panel_.input(i, e);
    if (e.tag == InputDetents ? e.value != 0 : (e.tag != inputs_[i].tag || (uint16_t)e.value != inputs_[i].value))
      return true;
  }
  return false;
}

bool LinkDevice::buildSeen() {
  FrameBuilder b(tx_);
  txType_ = TypeSeenReport;
  b.seenReport(ownAddress(), sequence_, hasApplied_, applied_);
  SeenEntry e;
  // Start where the last full report stopped, so a busy element early in the list cannot keep
  // the ones after it from ever being reported.
  uint16_t index = seenCursor_ < elementCount_ ? seenCursor_ : 0;
  bool complete = true;
  for (uint16_t n = 0; n < elementCount_; n++, index = (uint16_t)(index + 1) == elementCount_ ? 0 : index + 1) {
    e.element = index;
    e.text = 0;
    e.textLength = 0;
    e.value = 0;
    panel_.seen(index, e);
    const int32_t fingerprint = seenFingerprint(e);
    ElementMemo& memo = elements_[index];
    if (memo.tag != kForce && memo.tag == e.tag && memo.value == fingerprint) continue;
    if (!b.addSeen(e)) {
      seenCursor_ = index;
      complete = false;
      break;
    }
    memo.tag = e.tag;
    memo.value = fingerprint;
  }
  // Every element was just asked: a change scan now would find nothing this report missed.
  if (complete) lastLookMs_ = config_.millis();
  txLength_ = b.seal();
  return txLength_ != 0;
}

bool LinkDevice::buildInputs(bool& more) {
  more = false;
  FrameBuilder b(tx_);
  txType_ = TypeInputEvent;
  b.inputEvent(ownAddress(), sequence_);
  InputEntry e;
  for (uint8_t i = 0; i < inputCount_; i++) {
    e.value = 0;
    panel_.input(i, e);
    InputMemo& memo = inputs_[i];
    if (e.tag == 0) continue;
    const bool changed = e.tag == InputDetents ? e.value != 0
                                               : (memo.tag == kForce || memo.tag != e.tag || memo.value != (uint16_t)e.value);
    if (!changed) continue;
    if (!b.addInput(e)) {
      more = true;
      break;
    }
    memo.tag = e.tag;
    memo.value = (uint16_t)e.value;
    panel_.inputSent(i, e);
  }
  if (b.entryCount() == 0) return false;
  txLength_ = b.seal();
  return txLength_ != 0;
}

void LinkDevice::buildError(uint8_t code, uint16_t subject) {
  char text[kMaxTextBytes];
  const uint8_t length = errorText(code, text);
  FrameBuilder b(tx_);
  txType_ = TypeDeviceError;
  b.error(ownAddress(), sequence_, true, code, subject, text, length);
  txLength_ = b.seal();
}

uint16_t LinkDevice::buildNext(bool answerOnBus) {
  if (txLength_) return 0;  // the frame in hand goes first
  while (queueLength_ && !txLength_) {
    Pending& p = queue_[queueHead_];
    bool pop = true;
    switch (p.kind) {
      case KindHello: {
        Hello h;
        h.protocolVersion = kProtocolVersion;
        memcpy(h.deviceId, config_.deviceId, 8);
        memcpy(h.firmware, config_.firmware, 3);
        uint16_t caps = kCapValueUpdates | kCapSeenReports;
        if (inputCount_) caps |= kCapInputEvents;
        if (bus()) caps |= kCapWaitsForPoll;
        for (uint16_t i = 0; i < channelCount_; i++) {
          if (channels_[i].text && (channels_[i].accepts & kAcceptText)) caps |= kCapTextValues;
#if PP_FLOAT_VALUES
          if (channels_[i].accepts & kAcceptFloat) caps |= kCapFloatValues;
#endif
        }
        h.capabilities = caps;
        h.maxFrameBytes = kMaxFrameBytes;
        h.elementCount = elementCount_;
        h.channelCount = channelCount_;
        h.panel = config_.panel;
        const size_t length = strlen(config_.panel);
        h.panelLength = (uint8_t)(length > kMaxTextBytes ? kMaxTextBytes : length);
        FrameBuilder b(tx_);
        txType_ = TypeHello;
        b.hello(ownAddress(), sequence_, h);
        txLength_ = b.seal();
        break;
      }
      case KindError:
        buildError(p.code, p.subject);
        break;
      case KindHeartbeat: {
        Heartbeat h;
        h.uptimeMs = config_.millis();
        h.framesReceived = counters_.received;
        h.badCrc = counters_.badCrc;
        h.truncated = counters_.truncated;
        h.oversized = counters_.oversized;
        h.rejected = counters_.rejected;
        h.dropped = counters_.dropped;
        h.freeMemory = kFreeMemoryUnknown;
        if (config_.freeMemory) {
          const uint16_t free = config_.freeMemory();
          h.freeMemory = free > 0xfffe ? 0xfffe : free;
        }
        FrameBuilder b(tx_);
        txType_ = TypeHeartbeat;
        b.heartbeat(ownAddress(), sequence_, h);
        txLength_ = b.seal();
        lastHeartbeatMs_ = config_.millis();
        break;
      }
      case KindInputs: {
        bool more;
        buildInputs(more);
        pop = !more;
        break;
      }
      case KindSeen:
        PP_MARK(PP_MARK_ENCODE);
        buildSeen();
        break;
    }
    if (pop) {
      const bool wasError = p.kind == KindError;
      queueHead_ = (queueHead_ + 1) % kQueueSize;
      queueLength_--;
      if (wasError && droppedUnreported_) {
        const uint16_t n = droppedUnreported_;
        droppedUnreported_ = 0;
        enqueue(KindError, ErrQueueFull, n);
      }
    }
  }
  // A bus device answers every frame addressed to it: with nothing queued, a report of what
  // changed (perhaps nothing), which still acknowledges the latest applied update.
  if (!txLength_ && answerOnBus) {
    PP_MARK(PP_MARK_ENCODE);
    buildSeen();
  }
  if (txLength_) {
    sequence_++;
    txOffset_ = 0;
  }
  return txLength_;
}

void LinkDevice::send() {
  if (!txLength_) return;
  const uint16_t room = port_.writable();
  if (!room) return;
  uint16_t n = txLength_ - txOffset_;
  if (n > room) n = room;
  PP_MARK(PP_MARK_WRITE);
  port_.write(tx_ + txOffset_, n);
  txOffset_ += n;
  PP_MARK(PP_MARK_IDLE);
  if (txOffset_ == txLength_) {
    txLength_ = 0;
    txOffset_ = 0;
    PP_MARK_SENT(txType_);
  }
}

void LinkDevice::flush() {
  // One frame in hand at a time: when the port is full the frame waits, already built.
  for (;;) {
    if (txLength_) {
      send();
      if (txLength_) return;
    }
    if (!queueLength_) return;
    if (!buildNext(false)) return;
    PP_MARK(PP_MARK_IDLE);
  }
}

void LinkDevice::update() {
  const uint32_t now = config_.millis();
  if ((uint32_t)(now - lastHeartbeatMs_) >= config_.heartbeatMs) {
    lastHeartbeatMs_ = now;
    enqueue(KindHeartbeat);
  }
  if ((uint32_t)(now - lastScanMs_) >= config_.scanMs) {
    PP_MARK(PP_MARK_SCAN);
    lastScanMs_ = now;
    if (inputCount_ && !queued(KindInputs) && anyInputChanged()) enqueue(KindInputs);
    PP_MARK(PP_MARK_IDLE);
  }
  // A bus device reports changes in its answers; a direct one says so when they happen (a
  // pointer still moving, a lamp flashing), at most once per scanMs. Elements are looked at
  // scanMs after they were last looked at, by this scan or by a report: on a busy line the
  // reports do the looking, and asking 40 elements again in between would find nothing new.
  if (!bus() && (uint32_t)(now - lastLookMs_) >= config_.scanMs) {
    PP_MARK(PP_MARK_SCAN);
    lastLookMs_ = now;
    if (!queued(KindSeen) && anyElementChanged()) enqueue(KindSeen);
    PP_MARK(PP_MARK_IDLE);
  }
  if (bus()) {
    if (txLength_) {
      send();
      return;
    }
    if (answerDue_ && (uint32_t)(config_.micros() - answerAtUs_) >= config_.answerDelayUs) {
      answerDue_ = false;
      buildNext(true);
      PP_MARK(PP_MARK_IDLE);
      send();
    }
    return;
  }
  flush();
}

}  // namespace pp
