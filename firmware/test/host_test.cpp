// Host tests of the firmware library, built with the machine's g++ (make -C firmware host-test).
// They hold the C++ side to shared/link/test-vectors.json, the same file the TypeScript codec is
// tested against, then drive the device logic through good and bad input.
//
// Output: one "ok N - name" or "not ok N - name: why" line per test, "device-frame <hex>" lines
// for frames the device produced (the Vitest wrapper decodes each with the TypeScript codec, so
// the two implementations check each other), and a last line "host tests: N passed, N failed".

#include <cmath>
#include <cstdarg>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <functional>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "../src/PanelproofLink.h"
#include "json.h"

using Bytes = std::vector<uint8_t>;

// ---- a very small runner ---------------------------------------------------------------------

static int g_passed = 0, g_failed = 0, g_number = 0;
static std::string g_failure;

static void fail(const char* format, ...) {
  if (!g_failure.empty()) return;  // the first failure says most
  char text[512];
  va_list args;
  va_start(args, format);
  vsnprintf(text, sizeof text, format, args);
  va_end(args);
  g_failure = text;
}

#define EXPECT(cond, ...)                                     \
  do {                                                        \
    if (!(cond)) fail("line %d: %s", __LINE__, #cond), (void)0; \
  } while (0)
#define EXPECT_EQ(a, b)                                                                                  \
  do {                                                                                                   \
    long long _a = (long long)(a), _b = (long long)(b);                                                  \
    if (_a != _b) fail("line %d: %s == %lld, expected %s == %lld", __LINE__, #a, _a, #b, _b);              \
  } while (0)

static void run(const std::string& name, const std::function<void()>& body) {
  g_failure.clear();
  g_number++;
  try {
    body();
  } catch (const std::exception& e) {
    fail("threw %s", e.what());
  }
  if (g_failure.empty()) {
    g_passed++;
    printf("ok %d - %s\n", g_number, name.c_str());
  } else {
    g_failed++;
    printf("not ok %d - %s: %s\n", g_number, name.c_str(), g_failure.c_str());
  }
}

// ---- helpers ---------------------------------------------------------------------------------

static Bytes hex(const std::string& text) {
  Bytes out;
  std::istringstream in(text);
  std::string word;
  while (in >> word) out.push_back((uint8_t)std::stoul(word, nullptr, 16));
  return out;
}

static std::string toHex(const uint8_t* data, size_t length) {
  std::string out;
  char part[4];
  for (size_t i = 0; i < length; i++) {
    snprintf(part, sizeof part, i ? " %02x" : "%02x", data[i]);
    out += part;
  }
  return out;
}
static std::string toHex(const Bytes& b) { return toHex(b.data(), b.size()); }

static const char* faultName(pp::Fault f) {
  static const char* names[] = {"none", "bad_crc", "truncated", "oversized", "unknown_type",
                                "bad_version", "bad_address", "bad_payload"};
  return f < 8 ? names[f] : "?";
}

static const char* errorName(uint8_t code) {
  static const char* names[] = {"?", "bad_crc", "truncated", "oversized", "unknown_type", "bad_version",
                                "bad_address", "bad_payload", "unknown_channel", "unknown_element",
                                "unsupported_value", "queue_full"};
  return code <= pp::kLastErrorCode ? names[code] : "?";
}

static std::string fmtFloat(double value) {
  char text[40];
  snprintf(text, sizeof text, "%.9g", (double)(float)value);
  return text;
}

static std::string quote(const char* text, size_t length) { return "\"" + std::string(text, length) + "\""; }

// One frame's meaning as a canonical line, from the C++ decoder...
static std::string describe(const pp::Frame& f) {
  std::ostringstream o;
  o << "address=" << (int)f.address << " sequence=" << (int)f.sequence << " ";
  switch (f.type) {
    case pp::TypeIdentify: o << "identify"; break;
    case pp::TypePoll: o << "poll"; break;
    case pp::TypeReset: o << "reset"; break;
    case pp::TypeValueUpdate: {
      pp::ValueUpdateReader r(f);
      o << "value_update begin=" << ((r.flags & pp::kKeyframeBegin) ? 1 : 0) << " end=" << ((r.flags & pp::kKeyframeEnd) ? 1 : 0);
      pp::ChannelValue v;
      while (r.next(v)) {
        o << " [" << v.channel << " ";
        switch (v.tag) {
          case pp::ValueBoolean: o << "boolean " << (v.i ? "true" : "false"); break;
          case pp::ValueInt: o << "int " << v.i; break;
          case pp::ValueFloat: o << "float " << fmtFloat(v.f); break;
          case pp::ValueEnum: o << "enum " << v.i; break;
          case pp::ValueText: o << "text " << quote(v.text, v.textLength); break;
        }
        o << "]";
      }
      break;
    }
    case pp::TypeHello: {
      pp::Hello h;
      if (!pp::readHello(f, h)) return "unreadable hello";
      char id[17];
      for (int i = 0; i < 8; i++) snprintf(id + 2 * i, 3, "%02x", h.deviceId[i]);
      o << "hello id=" << id << " firmware=" << (int)h.firmware[0] << "." << (int)h.firmware[1] << "." << (int)h.firmware[2]
        << " protocol=" << (int)h.protocolVersion << " caps=" << h.capabilities << " max=" << (int)h.maxFrameBytes
        << " elements=" << h.elementCount << " channels=" << h.channelCount << " panel=" << quote(h.panel, h.panelLength);
      break;
    }
    case pp::TypeSeenReport: {
      pp::SeenReportReader r(f);
      o << "seen_report applied=";
      if (r.hasAppliedSequence) o << (int)r.appliedSequence; else o << "null";
      static const char* lamp[] = {"off", "on", "flashing"};
      static const char* breaker[] = {"in", "pulled", "tripped"};
      pp::SeenEntry e;
      while (r.next(e)) {
        o << " [" << e.element << " ";
        switch (e.tag) {
          case pp::SeenUnknown: o << "unknown"; break;
          case pp::SeenLampLevel: o << "lamp_level " << e.value; break;
          case pp::SeenLampState: o << "lamp_state " << lamp[e.value]; break;
          case pp::SeenPointerAngle: o << "pointer_angle " << e.value; break;
          case pp::SeenPointerSteps: o << "pointer_steps " << e.value; break;
          case pp::SeenReadout: o << "readout " << quote(e.text, e.textLength); break;
          case pp::SeenBreaker: o << "breaker " << breaker[e.value]; break;
          case pp::SeenSwitch: o << "switch " << e.value; break;
        }
        o << "]";
      }
      break;
    }
    case pp::TypeInputEvent: {
      pp::InputEventReader r(f);
      o << "input_event";
      pp::InputEntry e;
      while (r.next(e)) {
        o << " [" << e.element << " ";
        switch (e.tag) {
          case pp::InputPosition: o << "position " << e.value; break;
          case pp::InputDetents: o << "detents " << e.value; break;
          case pp::InputButton: o << "button " << (e.value ? "true" : "false"); break;
          case pp::InputAnalog: o << "analog " << e.value; break;
        }
        o << "]";
      }
      break;
    }
    case pp::TypeHeartbeat: {
      pp::Heartbeat h;
      if (!pp::readHeartbeat(f, h)) return "unreadable heartbeat";
      o << "heartbeat uptime=" << h.uptimeMs << " received=" << h.framesReceived << " badCrc=" << h.badCrc
        << " truncated=" << h.truncated << " oversized=" << h.oversized << " rejected=" << h.rejected
        << " dropped=" << h.dropped << " free=";
      if (h.freeMemory == pp::kFreeMemoryUnknown) o << "null"; else o << h.freeMemory;
      break;
    }
    case pp::TypeBenchError:
    case pp::TypeDeviceError: {
      pp::ErrorMessage e;
      if (!pp::readError(f, e)) return "unreadable error";
      o << "error from=" << ((f.type & pp::kFromDevice) ? "device" : "bench") << " code=" << errorName(e.code)
        << " subject=" << e.subject << " text=" << quote(e.text, e.textLength);
      break;
    }
  }
  return o.str();
}

// ...and the same line from a vector's JSON meaning.
static std::string describe(const json::Value& frame) {
  std::ostringstream o;
  const json::Value& m = frame["message"];
  const std::string type = m["type"].string;
  o << "address=" << (int)frame["address"].number << " sequence=" << (int)frame["sequence"].number << " ";
  if (type == "identify" || type == "poll" || type == "reset") {
    o << type;
  } else if (type == "value_update") {
    o << "value_update begin=" << (m["keyframeBegin"].boolean ? 1 : 0) << " end=" << (m["keyframeEnd"].boolean ? 1 : 0);
    for (const json::Value& v : m["values"].array) {
      const std::string kind = v["kind"].string;
      o << " [" << (int)v["channel"].number << " " << kind << " ";
      if (kind == "boolean") o << (v["value"].boolean ? "true" : "false");
      else if (kind == "float") o << fmtFloat(v["value"].number);
      else if (kind == "text") o << quote(v["value"].string.data(), v["value"].string.size());
      else o << (long long)v["value"].number;
      o << "]";
    }
  } else if (type == "hello") {
    const json::Value& c = m["capabilities"];
    int caps = (c["valueUpdates"].boolean ? 1 : 0) | (c["seenReports"].boolean ? 2 : 0) | (c["inputEvents"].boolean ? 4 : 0) |
               (c["waitsForPoll"].boolean ? 8 : 0) | (c["textValues"].boolean ? 16 : 0) | (c["floatValues"].boolean ? 32 : 0);
    o << "hello id=" << m["deviceId"].string << " firmware=" << (int)m["firmware"]["major"].number << "."
      << (int)m["firmware"]["minor"].number << "." << (int)m["firmware"]["patch"].number
      << " protocol=" << (int)m["protocolVersion"].number << " caps=" << caps << " max=" << (int)m["maxFrameBytes"].number
      << " elements=" << (int)m["elementCount"].number << " channels=" << (int)m["channelCount"].number
      << " panel=" << quote(m["panel"].string.data(), m["panel"].string.size());
  } else if (type == "seen_report") {
    o << "seen_report applied=";
    if (m["appliedSequence"].isNull()) o << "null"; else o << (int)m["appliedSequence"].number;
    for (const json::Value& e : m["seen"].array) {
      const std::string kind = e["kind"].string;
      o << " [" << (int)e["element"].number << " " << kind;
      if (kind == "lamp_level") o << " " << (int)e["level"].number;
      else if (kind == "lamp_state") o << " " << e["state"].string;
      else if (kind == "pointer_angle") o << " " << (long long)e["centidegrees"].number;
      else if (kind == "pointer_steps") o << " " << (long long)e["steps"].number;
      else if (kind == "readout") o << " " << quote(e["text"].string.data(), e["text"].string.size());
      else if (kind == "breaker") o << " " << e["position"].string;
      else if (kind == "switch") o << " " << (int)e["position"].number;
      o << "]";
    }
  } else if (type == "input_event") {
    o << "input_event";
    for (const json::Value& e : m["inputs"].array) {
      const std::string kind = e["kind"].string;
      o << " [" << (int)e["element"].number << " " << kind << " ";
      if (kind == "position") o << (int)e["position"].number;
      else if (kind == "detents") o << (int)e["delta"].number;
      else if (kind == "button") o << (e["pressed"].boolean ? "true" : "false");
      else o << (int)e["level"].number;
      o << "]";
    }
  } else if (type == "heartbeat") {
    o << "heartbeat uptime=" << (long long)m["uptimeMs"].number << " received=" << (int)m["framesReceived"].number
      << " badCrc=" << (int)m["badCrc"].number << " truncated=" << (int)m["truncated"].number
      << " oversized=" << (int)m["oversized"].number << " rejected=" << (int)m["rejected"].number
      << " dropped=" << (int)m["dropped"].number << " free=";
    if (m["freeMemoryBytes"].isNull()) o << "null"; else o << (int)m["freeMemoryBytes"].number;
  } else if (type == "error") {
    o << "error from=" << m["from"].string << " code=" << m["code"].string << " subject=" << (int)m["subject"].number
      << " text=" << quote(m["text"].string.data(), m["text"].string.size());
  }
  return o.str();
}

static int errorCode(const std::string& name) {
  for (int code = 1; code <= pp::kLastErrorCode; code++) {
    if (name == errorName((uint8_t)code)) return code;
  }
  return 0;
}

// Encodes a vector's JSON meaning with the C++ builder; returns the wire bytes.
static Bytes encode(const json::Value& frame) {
  uint8_t buffer[pp::kMaxWireBytes];
  pp::FrameBuilder b(buffer);
  const json::Value& m = frame["message"];
  const std::string type = m["type"].string;
  const uint8_t address = (uint8_t)frame["address"].number;
  const uint8_t sequence = (uint8_t)frame["sequence"].number;
  if (type == "identify") b.begin(address, pp::TypeIdentify, sequence);
  else if (type == "poll") b.begin(address, pp::TypePoll, sequence);
  else if (type == "reset") b.begin(address, pp::TypeReset, sequence);
  else if (type == "value_update") {
    b.valueUpdate(address, sequence, (m["keyframeBegin"].boolean ? pp::kKeyframeBegin : 0) | (m["keyframeEnd"].boolean ? pp::kKeyframeEnd : 0));
    for (const json::Value& v : m["values"].array) {
      pp::ChannelValue c = {};
      c.channel = (uint16_t)v["channel"].number;
      const std::string kind = v["kind"].string;
      if (kind == "boolean") { c.tag = pp::ValueBoolean; c.i = v["value"].boolean; }
      else if (kind == "int") { c.tag = pp::ValueInt; c.i = (int32_t)v["value"].number; }
      else if (kind == "float") { c.tag = pp::ValueFloat; c.f = (float)v["value"].number; }
      else if (kind == "enum") { c.tag = pp::ValueEnum; c.i = (int32_t)v["value"].number; }
      else { c.tag = pp::ValueText; c.text = v["value"].string.data(); c.textLength = (uint8_t)v["value"].string.size(); }
      EXPECT(b.addValue(c));
    }
  } else if (type == "hello") {
    pp::Hello h = {};
    h.protocolVersion = (uint8_t)m["protocolVersion"].number;
    Bytes id = hex(m["deviceId"].string.substr(0, 2) + " " + m["deviceId"].string.substr(2, 2) + " " + m["deviceId"].string.substr(4, 2) + " " +
                   m["deviceId"].string.substr(6, 2) + " " + m["deviceId"].string.substr(8, 2) + " " + m["deviceId"].string.substr(10, 2) + " " +
                   m["deviceId"].string.substr(12, 2) + " " + m["deviceId"].string.substr(14, 2));
    memcpy(h.deviceId, id.data(), 8);
    h.firmware[0] = (uint8_t)m["firmware"]["major"].number;
    h.firmware[1] = (uint8_t)m["firmware"]["minor"].number;
    h.firmware[2] = (uint8_t)m["firmware"]["patch"].number;
    const json::Value& c = m["capabilities"];
    h.capabilities = (c["valueUpdates"].boolean ? pp::kCapValueUpdates : 0) | (c["seenReports"].boolean ? pp::kCapSeenReports : 0) |
                     (c["inputEvents"].boolean ? pp::kCapInputEvents : 0) | (c["waitsForPoll"].boolean ? pp::kCapWaitsForPoll : 0) |
                     (c["textValues"].boolean ? pp::kCapTextValues : 0) | (c["floatValues"].boolean ? pp::kCapFloatValues : 0);
    h.maxFrameBytes = (uint8_t)m["maxFrameBytes"].number;
    h.elementCount = (uint16_t)m["elementCount"].number;
    h.channelCount = (uint16_t)m["channelCount"].number;
    h.panel = m["panel"].string.data();
    h.panelLength = (uint8_t)m["panel"].string.size();
    b.hello(address, sequence, h);
  } else if (type == "seen_report") {
    const bool has = !m["appliedSequence"].isNull();
    b.seenReport(address, sequence, has, has ? (uint8_t)m["appliedSequence"].number : 0);
    for (const json::Value& e : m["seen"].array) {
      pp::SeenEntry s = {};
      s.element = (uint16_t)e["element"].number;
      const std::string kind = e["kind"].string;
      if (kind == "unknown") s.tag = pp::SeenUnknown;
      else if (kind == "lamp_level") { s.tag = pp::SeenLampLevel; s.value = (int32_t)e["level"].number; }
      else if (kind == "lamp_state") { s.tag = pp::SeenLampState; s.value = e["state"].string == "off" ? 0 : e["state"].string == "on" ? 1 : 2; }
      else if (kind == "pointer_angle") { s.tag = pp::SeenPointerAngle; s.value = (int32_t)e["centidegrees"].number; }
      else if (kind == "pointer_steps") { s.tag = pp::SeenPointerSteps; s.value = (int32_t)e["steps"].number; }
      else if (kind == "readout") { s.tag = pp::SeenReadout; s.text = e["text"].string.data(); s.textLength = (uint8_t)e["text"].string.size(); }
      else if (kind == "breaker") { s.tag = pp::SeenBreaker; s.value = e["position"].string == "in" ? 0 : e["position"].string == "pulled" ? 1 : 2; }
      else if (kind == "switch") { s.tag = pp::SeenSwitch; s.value = (int32_t)e["position"].number; }
      EXPECT(b.addSeen(s));
    }
  } else if (type == "input_event") {
    b.inputEvent(address, sequence);
    for (const json::Value& e : m["inputs"].array) {
      pp::InputEntry in = {};
      in.element = (uint16_t)e["element"].number;
      const std::string kind = e["kind"].string;
      if (kind == "position") { in.tag = pp::InputPosition; in.value = (int32_t)e["position"].number; }
      else if (kind == "detents") { in.tag = pp::InputDetents; in.value = (int32_t)e["delta"].number; }
      else if (kind == "button") { in.tag = pp::InputButton; in.value = e["pressed"].boolean; }
      else { in.tag = pp::InputAnalog; in.value = (int32_t)e["level"].number; }
      EXPECT(b.addInput(in));
    }
  } else if (type == "heartbeat") {
    pp::Heartbeat h = {};
    h.uptimeMs = (uint32_t)m["uptimeMs"].number;
    h.framesReceived = (uint16_t)m["framesReceived"].number;
    h.badCrc = (uint16_t)m["badCrc"].number;
    h.truncated = (uint16_t)m["truncated"].number;
    h.oversized = (uint16_t)m["oversized"].number;
    h.rejected = (uint16_t)m["rejected"].number;
    h.dropped = (uint16_t)m["dropped"].number;
    h.freeMemory = m["freeMemoryBytes"].isNull() ? pp::kFreeMemoryUnknown : (uint16_t)m["freeMemoryBytes"].number;
    b.heartbeat(address, sequence, h);
  } else if (type == "error") {
    b.error(address, sequence, m["from"].string == "device", (uint8_t)errorCode(m["code"].string), (uint16_t)m["subject"].number,
            m["text"].string.data(), (uint8_t)m["text"].string.size());
  }
  const uint16_t length = b.seal();
  return Bytes(buffer, buffer + length);
}

// What a stream receiver makes of some bytes: fault names, or "frame:<meaning>".
static std::vector<std::string> receiveAll(const Bytes& wire) {
  pp::FrameReceiver receiver;
  std::vector<std::string> events;
  for (uint8_t byte : wire) {
    if (!receiver.push(byte)) continue;
    if (receiver.fault() != pp::FaultNone) {
      events.push_back(faultName(receiver.fault()));
      continue;
    }
    pp::Frame frame;
    uint16_t subject;
    pp::Fault f = pp::checkHeader(receiver.body(), receiver.length(), frame, subject);
    if (f == pp::FaultNone) f = pp::checkPayload(frame);
    events.push_back(f == pp::FaultNone ? "frame:" + describe(frame) : faultName(f));
  }
  return events;
}

// ---- a panel and a port for the device tests --------------------------------------------------

static uint32_t g_ms = 0, g_us = 0;
static uint32_t fakeMillis() { return g_ms; }
static uint32_t fakeMicros() { return g_us; }
static uint16_t fakeFree() { return 5120; }
static void advance(uint32_t ms) {
  g_ms += ms;
  g_us += ms * 1000;
}

// Element 0: lamp from channel 0 (boolean). Element 1: pointer, channel 1 (number) in degrees.
// Element 2: readout of channel 2 (text, or an int shown in digits). Element 3: a switch
// (input 0). Extra pointers beyond that follow channel 1 too, to make reports that overflow.
struct TestPanel : pp::Panel {
  uint16_t elements = 4;
  int follows = 0, rests = 0;
  bool lamp = false;
  int32_t centidegrees = 0;
  char readout[pp::kMaxTextBytes + 1] = "";
  uint8_t switchPosition = 0;
  bool invertLamp = false;

  uint16_t elementCount() const override { return elements; }
  uint8_t inputCount() const override { return 1; }
  void follow(const pp::Channel* c, uint16_t) override {
    follows++;
    lamp = c[0].isOn() != invertLamp;
    centidegrees = c[1].known() ? (int32_t)lround(c[1].asFloat() * 100) : 0;
    if (c[2].tag == pp::ValueText) snprintf(readout, sizeof readout, "%s", c[2].text);
    else if (c[2].known()) snprintf(readout, sizeof readout, "%ld", (long)c[2].asInt());
    else readout[0] = 0;
  }
  void rest() override {
    rests++;
    lamp = false;
    centidegrees = 0;
    readout[0] = 0;
  }
  void seen(uint16_t i, pp::SeenEntry& e) override {
    e.element = i;
    if (i == 0) { e.tag = pp::SeenLampState; e.value = lamp ? pp::LampOn : pp::LampOff; }
    else if (i == 2) { e.tag = pp::SeenReadout; e.text = readout; e.textLength = (uint8_t)strlen(readout); }
    else if (i == 3) { e.tag = pp::SeenSwitch; e.value = switchPosition; }
    else { e.tag = pp::SeenPointerAngle; e.value = centidegrees + (int32_t)i; }
  }
  void input(uint8_t, pp::InputEntry& e) override {
    e.element = 3;
    e.tag = pp::InputPosition;
    e.value = switchPosition;
  }
};

struct TestPort : pp::LinkPort {
  Bytes bytes;
  uint16_t room = 4096;
  uint16_t writable() override { return room; }
  void write(const uint8_t* data, uint16_t length) override {
    bytes.insert(bytes.end(), data, data + length);
    if (room != 4096) room = (uint16_t)(room - length);
  }
};

// A device on the test panel plus what it sent, decoded frame by frame.
struct Rig {
  TestPanel panel;
  TestPort port;
  char text[pp::kMaxTextBytes + 1];
  pp::Channel channels[3];
  pp::DeviceConfig config;
  pp::LinkDeviceWith<64, 1>* device;
  uint8_t benchSequence = 0;
  bool print = true;

  explicit Rig(uint8_t address = 0, bool bus = false, uint16_t elements = 4) {
    panel.elements = elements;
    channels[0] = pp::channel(pp::kAcceptBoolean);
    channels[1] = pp::channel(pp::kAcceptNumber);
    channels[2] = pp::textChannel(text, pp::kAcceptInt);
    config = pp::DeviceConfig{address, bus, {0xa1, 0xb2, 0xc3, 0xd4, 0xe5, 0xf6, 0x07, 0x18}, {1, 2, 0}, "test-panel",
                              1000, 20, 1750, fakeMillis, fakeMicros, fakeFree};
    device = new pp::LinkDeviceWith<64, 1>(config, panel, port, channels, 3);
    device->begin();
  }
  ~Rig() { delete device; }
  Rig(const Rig&) = delete;

  void feed(const Bytes& wire) {
    for (uint8_t byte : wire) device->receive(byte);
  }
  // Sends a bench frame built by `build` to the device, then lets the device run.
  void send(const std::function<void(pp::FrameBuilder&, uint8_t)>& build, uint32_t thenMs = 0) {
    uint8_t buffer[pp::kMaxWireBytes];
    pp::FrameBuilder b(buffer);
    build(b, benchSequence++);
    const uint16_t length = b.seal();
    feed(Bytes(buffer, buffer + length));
    settle(thenMs);
  }
  void settle(uint32_t ms = 0) {
    device->update();
    // On a bus the answer waits for the line's silence (1.75 ms).
    advance(2);
    device->update();
    if (ms) advance(ms);
    device->update();
  }
  // Every frame the device sent since the last call, decoded, and printed for the TS cross-check.
  std::vector<std::string> frames() {
    std::vector<std::string> out;
    pp::FrameReceiver receiver;
    size_t start = 0;
    for (size_t i = 0; i < port.bytes.size(); i++) {
      if (port.bytes[i] == 0 && print) {
        printf("device-frame %s\n", toHex(port.bytes.data() + start, i + 1 - start).c_str());
        start = i + 1;
      }
      if (!receiver.push(port.bytes[i])) continue;
      if (receiver.fault() != pp::FaultNone) {
        out.push_back(std::string("fault ") + faultName(receiver.fault()));
        continue;
      }
      pp::Frame frame;
      pp::Fault f = pp::decodeFrameBody(receiver.body(), receiver.length(), frame);
      out.push_back(f == pp::FaultNone ? describe(frame) : std::string("fault ") + faultName(f));
    }
    port.bytes.clear();
    return out;
  }
};

static void identify(pp::FrameBuilder& b, uint8_t s, uint8_t address = 0) { b.begin(address, pp::TypeIdentify, s); }
static void poll(pp::FrameBuilder& b, uint8_t s, uint8_t address = 0) { b.begin(address, pp::TypePoll, s); }

static pp::ChannelValue boolValue(uint16_t channel, bool on) {
  pp::ChannelValue v = {};
  v.channel = channel;
  v.tag = pp::ValueBoolean;
  v.i = on;
  return v;
}
static pp::ChannelValue floatValue(uint16_t channel, float f) {
  pp::ChannelValue v = {};
  v.channel = channel;
  v.tag = pp::ValueFloat;
  v.f = f;
  return v;
}
static pp::ChannelValue textValue(uint16_t channel, const char* text) {
  pp::ChannelValue v = {};
  v.channel = channel;
  v.tag = pp::ValueText;
  v.text = text;
  v.textLength = (uint8_t)strlen(text);
  return v;
}
static pp::ChannelValue intValue(uint16_t channel, int32_t i) {
  pp::ChannelValue v = {};
  v.channel = channel;
  v.tag = pp::ValueInt;
  v.i = i;
  return v;
}

static std::function<void(pp::FrameBuilder&, uint8_t)> update(uint8_t flags, std::vector<pp::ChannelValue> values, uint8_t address = 0) {
  return [flags, values, address](pp::FrameBuilder& b, uint8_t s) {
    b.valueUpdate(address, s, flags);
    for (const pp::ChannelValue& v : values) b.addValue(v);
  };
}

static bool startsWith(const std::string& s, const std::string& prefix) { return s.compare(0, prefix.size(), prefix) == 0; }

static std::string snapshot(const pp::LinkDevice& d) {
  std::ostringstream o;
  for (uint16_t i = 0; i < d.channelCount(); i++) {
    const pp::Channel& c = d.channelAt(i);
    o << (int)c.tag << ":" << c.v.i << ":" << (c.text ? c.text : "") << ";";
  }
  return o.str();
}

// ---- the tests -------------------------------------------------------------------------------

int main(int argc, char** argv) {
  const char* path = argc > 1 ? argv[1] : "../shared/link/test-vectors.json";
  std::ifstream file(path);
  if (!file) {
    printf("not ok 1 - read %s: cannot open\nhost tests: 0 passed, 1 failed\n", path);
    return 1;
  }
  std::stringstream text;
  text << file.rdbuf();
  const json::Value vectors = json::parse(text.str());

  // -- against the shared vectors --

  run("vectors: protocol version is the library's", [&] { EXPECT_EQ(vectors["protocolVersion"].number, pp::kProtocolVersion); });

  // Catalogue of parametrised CRC algorithms (reveng), CRC-16/MODBUS: check 0x4b37, via the vectors file.
  for (const json::Value& check : vectors["crc"]["checks"].array) {
    Bytes data = check.has("ascii") ? Bytes(check["ascii"].string.begin(), check["ascii"].string.end()) : hex(check["hex"].string);
    const unsigned expected = (unsigned)std::stoul(check["crc"].string, nullptr, 16);
    run("crc: CRC-16/MODBUS of " + (check.has("ascii") ? "\"" + check["ascii"].string + "\"" : "[" + check["hex"].string + "]") + " is " + check["crc"].string,
        [&] { EXPECT_EQ(pp::crc16Modbus(data.data(), data.size()), expected); });
  }
  run("crc: the table step equals the bitwise step for every byte and a spread of registers", [&] {
    for (unsigned crc = 0; crc <= 0xffff; crc += 0x0101) {
      for (unsigned byte = 0; byte < 256; byte++) {
        EXPECT_EQ(pp::crc16Update((uint16_t)crc, (uint8_t)byte), pp::crc16UpdateBitwise((uint16_t)crc, (uint8_t)byte));
      }
    }
  });
  run("crc: the residue over a body and its own CRC is zero (catalogue residue 0x0000)", [&] {
    Bytes body = hex(vectors["frames"][0]["body"].string);
    EXPECT_EQ(pp::crc16Modbus(body.data(), body.size()), 0);
  });

  // COBS vectors: Cheshire and Baker 1999, common vectors, via the vectors file.
  for (const json::Value& v : vectors["cobs"]["vectors"].array) {
    run("cobs: [" + v["decoded"].string + "] <-> [" + v["encoded"].string + "]", [&] {
      Bytes decoded = hex(v["decoded"].string), encoded = hex(v["encoded"].string);
      uint8_t out[600];
      EXPECT_EQ(pp::cobsEncode(decoded.data(), decoded.size(), out), encoded.size());
      EXPECT(toHex(out, encoded.size()) == toHex(encoded));
      EXPECT_EQ(pp::cobsDecode(encoded.data(), encoded.size(), out), (int)decoded.size());
      EXPECT(toHex(out, decoded.size()) == toHex(decoded));
    });
  }
  run("cobs: 254 non-zero bytes stuff to ff and the bytes; in place gives the same", [&] {
    uint8_t in[255], out[300];
    for (int i = 0; i < 254; i++) in[1 + i] = (uint8_t)(1 + i % 255);
    EXPECT_EQ(pp::cobsEncode(in + 1, 254, out), 255);
    EXPECT_EQ(out[0], 0xff);
    EXPECT(memcmp(out + 1, in + 1, 254) == 0);
    pp::cobsEncode(in + 1, 254, in);
    EXPECT(memcmp(out, in, 255) == 0);
  });

  for (const json::Value& v : vectors["frames"].array) {
    const std::string name = v["name"].string;
    run("vector " + name + ": stream-decodes to the same meaning", [&] {
      std::vector<std::string> events = receiveAll(hex(v["wire"].string));
      EXPECT_EQ(events.size(), 1);
      if (events.size() == 1) {
        const std::string expected = "frame:" + describe(v["frame"]);
        if (events[0] != expected) fail("decoded %s, expected %s", events[0].c_str(), expected.c_str());
      }
    });
    run("vector " + name + ": the receiver's body is the vector's body", [&] {
      pp::FrameReceiver receiver;
      Bytes wire = hex(v["wire"].string);
      bool ended = false;
      for (uint8_t byte : wire) ended = receiver.push(byte);
      EXPECT(ended);
      EXPECT(toHex(receiver.body(), receiver.length()) == v["body"].string);
      pp::Frame frame;
      Bytes copy = wire;
      EXPECT_EQ(pp::decodeWireFrame(copy.data(), (uint16_t)copy.size(), frame), pp::FaultNone);
    });
    run("vector " + name + ": encodes to the same bytes", [&] {
      Bytes wire = encode(v["frame"]);
      if (toHex(wire) != v["wire"].string) fail("encoded %s, expected %s", toHex(wire).c_str(), v["wire"].string.c_str());
    });
  }

  for (const json::Value& v : vectors["faults"].array) {
    run("fault vector " + v["name"].string + ": refused as " + v["fault"].string, [&] {
      std::vector<std::string> events = receiveAll(hex(v["wire"].string));
      EXPECT_EQ(events.size(), 1);
      if (events.size() == 1 && events[0] != v["fault"].string) fail("got %s", events[0].c_str());
    });
  }

  run("stream vector: garbage, then the poll frame", [&] {
    std::vector<std::string> events = receiveAll(hex(vectors["stream"]["wire"].string));
    const json::Value& expect = vectors["stream"]["expect"];
    EXPECT_EQ(events.size(), expect.size());
    for (size_t i = 0; i < events.size() && i < expect.size(); i++) {
      if (expect[i].has("fault")) EXPECT(events[i] == expect[i]["fault"].string);
      else EXPECT(startsWith(events[i], "frame:") && events[i].find(" poll") != std::string::npos);
    }
  });

  run("receiver: the same vectors fed one frame after another in one stream", [&] {
    Bytes all;
    for (const json::Value& v : vectors["frames"].array) {
      Bytes w = hex(v["wire"].string);
      all.insert(all.end(), w.begin(), w.end());
    }
    std::vector<std::string> events = receiveAll(all);
    EXPECT_EQ(events.size(), vectors["frames"].size());
    for (const std::string& e : events) EXPECT(startsWith(e, "frame:"));
  });

  run("receiver: runs of 0x00 are empty frames, not faults", [&] {
    EXPECT_EQ(receiveAll(Bytes(50, 0)).size(), 0);
  });

  run("receiver: a frame with a 0x00 leading delimiter still decodes", [&] {
    Bytes w = hex(vectors["frames"][1]["wire"].string);
    w.insert(w.begin(), 0);
    std::vector<std::string> events = receiveAll(w);
    EXPECT_EQ(events.size(), 1);
    EXPECT(!events.empty() && startsWith(events[0], "frame:"));
  });

  run("receiver: oversized is counted once, then the next frame decodes", [&] {
    Bytes w(600, 0x41);
    w.push_back(0);
    Bytes poll = hex(vectors["frames"][1]["wire"].string);
    w.insert(w.end(), poll.begin(), poll.end());
    std::vector<std::string> events = receiveAll(w);
    EXPECT_EQ(events.size(), 2);
    if (events.size() == 2) {
      EXPECT(events[0] == "oversized");
      EXPECT(startsWith(events[1], "frame:"));
    }
  });

  run("receiver: exactly 255 stuffed bytes are accepted, 256 are oversized", [&] {
    // 254 non-zero body bytes stuff to 255; the body's CRC will not match, which is the point:
    // 255 bytes reach the CRC check (bad_crc), 256 never get that far (oversized).
    Bytes w(255, 0x41);
    w[0] = 0xff;
    w.push_back(0);
    std::vector<std::string> a = receiveAll(w);
    EXPECT(a.size() == 1 && a[0] == "bad_crc");
    Bytes x(256, 0x41);
    x.push_back(0);
    std::vector<std::string> b = receiveAll(x);
    EXPECT(b.size() == 1 && b[0] == "oversized");
  });

  run("payload: strict UTF-8 like the bench's fatal TextDecoder", [&] {
    const char* good[] = {"", "FL125", "\xc3\xa9", "\xe2\x82\xac", "\xf0\x9f\x9b\xab"};
    const char* bad[] = {"\xc0\x80", "\xed\xa0\x80", "\xf5\x80\x80\x80", "\xe2\x82", "\x80", "\xf4\x90\x80\x80", "\xe0\x80\x80"};
    for (const char* g : good) EXPECT(pp::validUtf8((const uint8_t*)g, (uint8_t)strlen(g)));
    for (const char* b : bad) EXPECT(!pp::validUtf8((const uint8_t*)b, (uint8_t)strlen(b)));
  });

  run("payload: reserved flag bits, a boolean of 2, NaN and left-over bytes are bad_payload", [&] {
    auto check = [&](Bytes headerAndPayload) {
      uint8_t buffer[pp::kMaxWireBytes];
      memcpy(buffer + 1, headerAndPayload.data(), headerAndPayload.size());
      const uint16_t crc = pp::crc16Modbus(buffer + 1, headerAndPayload.size());
      Bytes body = headerAndPayload;
      body.push_back((uint8_t)crc);
      body.push_back((uint8_t)(crc >> 8));
      pp::Frame frame;
      return pp::decodeFrameBody(body.data(), (uint8_t)body.size(), frame);
    };
    EXPECT_EQ(check(hex("01 03 04 07 04 00")), pp::ErrBadPayload);                 // reserved flag bit 2
    EXPECT_EQ(check(hex("01 03 04 07 00 01 00 00 01 02")), pp::ErrBadPayload);     // boolean 2
    EXPECT_EQ(check(hex("01 03 04 07 00 01 00 00 03 00 00 c0 7f")), pp::ErrBadPayload);  // NaN
    EXPECT_EQ(check(hex("01 03 04 07 00 01 00 00 03 00 00 80 7f")), pp::ErrBadPayload);  // +infinity
    EXPECT_EQ(check(hex("01 03 02 07 00")), pp::ErrBadPayload);                    // poll with a byte left over
    EXPECT_EQ(check(hex("01 03 04 07 00 01 00 00 09 00")), pp::ErrBadPayload);     // unknown value tag
    EXPECT_EQ(check(hex("01 03 04 07 00 01 00 00 05 21")), pp::ErrBadPayload);     // text longer than 32
    EXPECT_EQ(check(hex("01 03 04 07 00 00")), pp::FaultNone);                     // an empty delta is fine
    EXPECT_EQ(check(hex("01 ff 82 07 00 00 00")), pp::ErrBadAddress);              // a device frame to broadcast
  });

  // -- the device on a direct link --

  run("direct: power-up says hello, then every input's state", [&] {
    Rig rig;
    rig.settle();
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 2);
    if (f.size() == 2) {
      EXPECT(f[0] == "address=0 sequence=0 hello id=a1b2c3d4e5f60718 firmware=1.2.0 protocol=1 caps=55 max=254 elements=4 channels=3 panel=\"test-panel\"");
      EXPECT(f[1] == "address=0 sequence=1 input_event [3 position 0]");
    }
  });

  run("direct: identify is answered with hello and the inputs", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.panel.switchPosition = 1;
    rig.send([](pp::FrameBuilder& b, uint8_t s) { identify(b, s); });
    std::vector<std::string> f = rig.frames();
    EXPECT(f.size() >= 2);
    if (f.size() >= 2) {
      EXPECT(f[0].find("hello") != std::string::npos);
      EXPECT(f[1].find("input_event [3 position 1]") != std::string::npos);
    }
  });

  run("direct: a keyframe in one frame is applied and acknowledged with a full report", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.send(update(pp::kKeyframeBegin | pp::kKeyframeEnd, {boolValue(0, true), floatValue(1, 135.5f), textValue(2, "FL125")}));
    EXPECT_EQ(rig.panel.follows, 1);
    EXPECT(rig.device->channelAt(0).isOn());
    EXPECT_EQ(rig.device->channelAt(1).asInt(), 136);
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 1);
    if (!f.empty())
      EXPECT(f[0] == "address=0 sequence=2 seen_report applied=0 [0 lamp_state on] [1 pointer_angle 13551] [2 readout \"FL125\"] [3 switch 0]");
  });

  run("direct: a keyframe split over frames holds the outputs until its end", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.send(update(pp::kKeyframeBegin | pp::kKeyframeEnd, {boolValue(0, false), floatValue(1, 10), intValue(2, 7)}));
    rig.frames();
    const int before = rig.panel.follows;
    rig.send(update(pp::kKeyframeBegin, {boolValue(0, true)}));
    EXPECT(rig.device->holding());
    EXPECT_EQ(rig.panel.follows, before);
    EXPECT(!rig.panel.lamp);
    // Forgotten at the keyframe's start: channel 1 reads as unknown until the keyframe refills it.
    EXPECT(!rig.device->channelAt(1).known());
    EXPECT_EQ(rig.frames().size(), 0);
    rig.send(update(pp::kKeyframeEnd, {floatValue(1, 20), intValue(2, 125)}));
    EXPECT(!rig.device->holding());
    EXPECT_EQ(rig.panel.follows, before + 1);
    EXPECT(rig.panel.lamp);
    EXPECT(strcmp(rig.panel.readout, "125") == 0);
    std::vector<std::string> f = rig.frames();
    EXPECT(f.size() == 1 && f[0].find("applied=2 [0 lamp_state on] [1 pointer_angle 2001] [2 readout \"125\"]") != std::string::npos);
  });

  run("direct: a delta reports only what changed, and acknowledges even when nothing did", [&] {
    Rig rig;
    rig.settle();
    rig.send(update(3, {boolValue(0, false), floatValue(1, 10), intValue(2, 7)}));
    rig.frames();
    rig.send(update(0, {boolValue(0, true)}));
    std::vector<std::string> f = rig.frames();
    EXPECT(f.size() == 1 && f[0] == "address=0 sequence=3 seen_report applied=1 [0 lamp_state on]");
    rig.send(update(0, {boolValue(0, true)}));
    f = rig.frames();
    EXPECT(f.size() == 1 && f[0] == "address=0 sequence=4 seen_report applied=2");
  });

  run("direct: a readout that changes to another text of the same length is reported", [&] {
    Rig rig;
    rig.settle();
    rig.send(update(3, {boolValue(0, false), floatValue(1, 10), textValue(2, "ABC")}));
    rig.frames();
    rig.send(update(0, {textValue(2, "ABD")}));
    std::vector<std::string> f = rig.frames();
    EXPECT(f.size() == 1 && f[0].find("[2 readout \"ABD\"]") != std::string::npos);
  });

  run("direct: an unknown channel is refused by number, the rest applied", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.send(update(0, {boolValue(0, true), boolValue(42, true)}));
    EXPECT(rig.device->channelAt(0).isOn());
    std::vector<std::string> f = rig.frames();
    bool sawError = false;
    for (const std::string& s : f) sawError |= s.find("error from=device code=unknown_channel subject=42 text=\"no such channel\"") != std::string::npos;
    EXPECT(sawError);
  });

  run("direct: a value kind the channel does not take is unsupported_value", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.send(update(0, {textValue(0, "ON")}));
    EXPECT(!rig.device->channelAt(0).known());
    std::vector<std::string> f = rig.frames();
    bool sawError = false;
    for (const std::string& s : f) sawError |= s.find("code=unsupported_value subject=0") != std::string::npos;
    EXPECT(sawError);
  });

  run("direct: reset forgets values, rests outputs and drops the applied sequence", [&] {
    Rig rig;
    rig.settle();
    rig.send(update(3, {boolValue(0, true), floatValue(1, 10), intValue(2, 7)}));
    rig.frames();
    rig.send([](pp::FrameBuilder& b, uint8_t s) { b.begin(pp::kAddressBroadcast, pp::TypeReset, s); }, 25);
    EXPECT_EQ(rig.panel.rests, 1);
    EXPECT(!rig.device->channelAt(0).known());
    EXPECT(!rig.device->hasAppliedSequence());
    std::vector<std::string> f = rig.frames();
    // No answer to the broadcast itself; the next scan reports the rested outputs.
    EXPECT(f.size() == 1 && startsWith(f[0], "address=0 sequence=3 seen_report applied=null [0 lamp_state off]"));
  });

  run("direct: poll asks for a heartbeat with the counters", [&] {
    Rig rig;
    rig.settle();
    rig.feed(hex("ff 13 37 00"));
    rig.settle();
    rig.frames();
    g_ms += 123456;
    const uint32_t uptime = g_ms;
    rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s); });
    int heartbeats = 0;
    for (const std::string& s : rig.frames()) {
      if (s.find("heartbeat") == std::string::npos) continue;
      heartbeats++;
      const std::string want = "heartbeat uptime=" + std::to_string(uptime) + " received=1 badCrc=0 truncated=1 oversized=0 rejected=0 dropped=0 free=5120";
      if (s.find(want) == std::string::npos) fail("got %s", s.c_str());
    }
    EXPECT_EQ(heartbeats, 1);
  });

  run("direct: a heartbeat at least once a second without being asked", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    for (int i = 0; i < 30; i++) {
      advance(100);
      rig.device->update();
    }
    int heartbeats = 0;
    for (const std::string& s : rig.frames()) heartbeats += s.find("heartbeat") != std::string::npos;
    EXPECT_EQ(heartbeats, 3);
  });

  for (const json::Value& v : vectors["faults"].array) {
    run("direct: fault vector " + v["name"].string + " is counted, answered with its error, and harms nothing", [&] {
      // The vectors are addressed to device 3; on a direct link it also takes frames to 0.
      Rig rig(3);
      rig.settle();
      rig.send(update(3, {boolValue(0, true), floatValue(1, 12.5f), textValue(2, "OK")}));
      rig.frames();
      const std::string before = snapshot(*rig.device);
      const pp::Counters c0 = rig.device->counters();
      rig.feed(hex(v["wire"].string));
      rig.settle();
      EXPECT(snapshot(*rig.device) == before);
      std::vector<std::string> f = rig.frames();
      EXPECT_EQ(f.size(), 1);
      if (f.size() == 1) {
        const std::string want = "error from=device code=" + v["fault"].string;
        if (f[0].find(want) == std::string::npos) fail("answered %s", f[0].c_str());
      }
      const pp::Counters c1 = rig.device->counters();
      const int faults = (c1.badCrc - c0.badCrc) + (c1.truncated - c0.truncated) + (c1.oversized - c0.oversized) + (c1.rejected - c0.rejected);
      EXPECT_EQ(faults, 1);
      // And it carries on: the next good frame is applied and acknowledged.
      rig.send(update(0, {boolValue(0, false)}));
      EXPECT(!rig.device->channelAt(0).isOn());
      f = rig.frames();
      EXPECT(f.size() == 1 && f[0].find("seen_report applied=") != std::string::npos);
    });
  }

  run("direct: error subjects name the type byte, the version byte and the frame length", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.feed(hex("04 01 03 05 03 f2 88 00"));  // unknown type 0x05
    rig.feed(hex("04 02 03 01 03 f0 0c 00"));  // version 2
    rig.feed(hex("04 01 07 01 03 f0 48 00"));  // bad CRC, 8 bytes on the wire
    rig.settle();
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 3);
    if (f.size() == 3) {
      EXPECT(f[0].find("code=unknown_type subject=5") != std::string::npos);
      EXPECT(f[1].find("code=bad_version subject=2") != std::string::npos);
      EXPECT(f[2].find("code=bad_crc subject=8") != std::string::npos);
    }
  });

  run("direct: a flood of garbage is bounded: errors dropped are counted and said once", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    for (int i = 0; i < 40; i++) rig.feed(hex("13 37 00"));
    rig.settle();
    std::vector<std::string> f = rig.frames();
    EXPECT(rig.device->counters().truncated == 40);
    EXPECT(rig.device->counters().dropped > 0);
    bool saidFull = false;
    for (const std::string& s : f) saidFull |= s.find("code=queue_full") != std::string::npos;
    EXPECT(saidFull);
    EXPECT(f.size() < 15);
  });

  run("direct: frames for another bus address are ignored, not errors", [&] {
    Rig rig;
    rig.settle();
    rig.frames();
    rig.send(update(0, {boolValue(0, true)}, 9));
    EXPECT(!rig.device->channelAt(0).known());
    EXPECT_EQ(rig.frames().size(), 0);
    EXPECT_EQ(rig.device->counters().ignored, 1);
  });

  run("direct: every single-bit error in a value update is refused and changes nothing", [&] {
    Rig rig;
    rig.settle();
    rig.send(update(3, {boolValue(0, false), floatValue(1, 1), intValue(2, 1)}));
    rig.frames();
    const std::string before = snapshot(*rig.device);
    uint8_t buffer[pp::kMaxWireBytes];
    pp::FrameBuilder b(buffer);
    b.valueUpdate(0, 200, 0);
    b.addValue(boolValue(0, true));
    b.addValue(floatValue(1, 99));
    b.addValue(textValue(2, "XYZ"));
    const uint16_t length = b.seal();
    int refused = 0;
    for (uint16_t at = 0; at + 1 < length; at++) {
      for (int bit = 0; bit < 8; bit++) {
        Bytes w(buffer, buffer + length);
        w[at] ^= (uint8_t)(1 << bit);
        w.insert(w.begin(), 0);  // a leading delimiter, as after an idle line
        rig.feed(w);
        rig.settle();
        if (snapshot(*rig.device) != before) {
          fail("bit %d of byte %u changed the channels", bit, at);
          return;
        }
        refused++;
      }
    }
    rig.frames();
    EXPECT(refused > 100);
  });

  run("direct: a long run of random bytes never hangs or corrupts, and the link carries on", [&] {
    Rig rig;
    rig.settle();
    rig.send(update(3, {boolValue(0, true), floatValue(1, 45), intValue(2, 3)}));
    rig.frames();
    const std::string before = snapshot(*rig.device);
    std::mt19937 random(20261201);
    for (int round = 0; round < 200; round++) {
      const int n = 1 + (int)(random() % 700);
      for (int i = 0; i < n; i++) {
        // Zeros now and then, so the garbage comes in frames of all lengths.
        uint8_t byte = (random() % 16 == 0) ? 0 : (uint8_t)random();
        rig.device->receive(byte);
      }
      rig.settle();
      rig.port.bytes.clear();
      if (snapshot(*rig.device) != before) {
        fail("round %d changed the channels", round);
        return;
      }
    }
    const pp::Counters& c = rig.device->counters();
    EXPECT(c.badCrc + c.truncated + c.oversized > 100);
    // The garbage may have left half a frame open: a leading 0x00 closes it, as the protocol
    // advises after an idle or noisy line.
    rig.feed(Bytes(1, 0));
    rig.send(update(0, {boolValue(0, false)}));
    EXPECT(!rig.device->channelAt(0).isOn());
  });

  run("direct: a full port takes frames in pieces as room appears, never interleaved", [&] {
    Rig rig;
    rig.port.room = 10;
    rig.settle();
    EXPECT_EQ(rig.port.bytes.size(), 10);
    for (int i = 0; i < 20; i++) {
      rig.port.room = 3;  // a nearly full UART ring
      rig.device->update();
    }
    rig.port.room = 4096;
    rig.settle();
    std::vector<std::string> f = rig.frames();
    EXPECT(f.size() == 2 && f[0].find("hello") != std::string::npos && f[1].find("input_event") != std::string::npos);
  });

  run("direct: a report too long for one frame is split and every element is reported", [&] {
    Rig rig(0, false, 60);
    rig.settle();
    rig.frames();
    rig.send(update(3, {boolValue(0, true), floatValue(1, 12), intValue(2, 5)}), 25);
    for (int i = 0; i < 5; i++) rig.settle(25);
    std::vector<std::string> f = rig.frames();
    std::vector<bool> seen(60, false);
    int reports = 0;
    for (const std::string& s : f) {
      if (s.find("seen_report") == std::string::npos) continue;
      reports++;
      for (int e = 0; e < 60; e++) {
        if (s.find("[" + std::to_string(e) + " ") != std::string::npos) seen[e] = true;
      }
    }
    EXPECT(reports >= 2);
    for (int e = 0; e < 60; e++) {
      if (!seen[e]) fail("element %d never reported", e);
    }
  });

  run("direct: sequence gaps from the bench are counted as missed frames", [&] {
    Rig rig;
    rig.settle();
    rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s); });
    rig.benchSequence += 3;
    rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s); });
    rig.frames();
    EXPECT_EQ(rig.device->counters().missed, 3);
  });

  // -- the device on an RS-485 bus --

  run("bus: silent at power-up; identify to its address gets exactly one answer: hello", [&] {
    Rig rig(3, true);
    rig.settle(50);
    EXPECT_EQ(rig.frames().size(), 0);
    rig.send([](pp::FrameBuilder& b, uint8_t s) { identify(b, s, 3); });
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 1);
    if (f.size() == 1 && !(f[0].find("address=3 sequence=0 hello") == 0 && f[0].find("caps=63") != std::string::npos)) fail("got %s", f[0].c_str());
  });

  run("bus: the answer waits for the line's silence", [&] {
    Rig rig(3, true);
    uint8_t buffer[pp::kMaxWireBytes];
    pp::FrameBuilder b(buffer);
    b.begin(3, pp::TypePoll, 0);
    const uint16_t length = b.seal();
    rig.feed(Bytes(buffer, buffer + length));
    rig.device->update();
    g_us += 1000;
    rig.device->update();
    EXPECT_EQ(rig.port.bytes.size(), 0);
    g_us += 800;
    rig.device->update();
    EXPECT(rig.port.bytes.size() > 0);
    rig.frames();
  });

  run("bus: every addressed frame is answered exactly once, in queue order", [&] {
    Rig rig(3, true);
    rig.send([](pp::FrameBuilder& b, uint8_t s) { identify(b, s, 3); });
    rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s, 3); });
    rig.send(update(3, {boolValue(0, true), floatValue(1, 5), intValue(2, 42)}, 3));
    rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s, 3); });
    rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s, 3); });
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 5);
    if (f.size() == 5) {
      EXPECT(f[0].find("hello") != std::string::npos);
      EXPECT(f[1].find("input_event [3 position 0]") != std::string::npos);
      EXPECT(f[2].find("seen_report applied=2 [0 lamp_state on] [1 pointer_angle 501] [2 readout \"42\"] [3 switch 0]") != std::string::npos);
      // Nothing queued and nothing changed: an empty report that still acknowledges update 2.
      EXPECT(f[3].find("seen_report applied=2") != std::string::npos && f[3].find("[") == std::string::npos);
      EXPECT(f[4].find("seen_report applied=2") != std::string::npos);
    }
  });

  run("bus: broadcasts are applied and never answered", [&] {
    Rig rig(3, true);
    rig.send(update(3, {boolValue(0, true), floatValue(1, 5), intValue(2, 1)}, 255), 30);
    EXPECT(rig.device->channelAt(0).isOn());
    rig.send([](pp::FrameBuilder& b, uint8_t s) { b.begin(255, pp::TypeReset, s); }, 30);
    EXPECT(!rig.device->channelAt(0).known());
    EXPECT_EQ(rig.frames().size(), 0);
  });

  run("bus: frames to other addresses and other devices' answers are ignored, not answered", [&] {
    Rig rig(3, true);
    rig.send(update(3, {boolValue(0, true)}, 4));
    rig.send([](pp::FrameBuilder& b, uint8_t s) { identify(b, s, 7); });
    rig.send([](pp::FrameBuilder& b, uint8_t s) { b.seenReport(4, s, false, 0); });
    EXPECT(!rig.device->channelAt(0).known());
    EXPECT_EQ(rig.frames().size(), 0);
    EXPECT_EQ(rig.device->counters().ignored, 3);
    EXPECT_EQ(rig.device->counters().received, 0);
  });

  run("bus: bad CRC, truncated and oversized frames are counted and never answered", [&] {
    Rig rig(3, true);
    rig.feed(hex("04 01 03 01 03 f0 49 00"));
    rig.feed(hex("08 01 03 84 00"));
    rig.feed(Bytes(300, 0x41));
    rig.feed(Bytes(1, 0));
    rig.settle(30);
    EXPECT_EQ(rig.frames().size(), 0);
    EXPECT_EQ(rig.device->counters().badCrc, 1);
    EXPECT_EQ(rig.device->counters().truncated, 1);
    EXPECT_EQ(rig.device->counters().oversized, 1);
  });

  run("bus: a bad payload or unknown type addressed to it is answered with the error", [&] {
    Rig rig(3, true);
    rig.feed(hex("04 01 03 04 01 04 01 85 3a 00"));  // the bad_payload vector, to address 3
    rig.settle();
    rig.feed(hex("04 01 03 05 03 f2 88 00"));  // the unknown_type vector, to address 3
    rig.settle();
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 2);
    if (f.size() == 2) {
      EXPECT(f[0].find("code=bad_payload subject=4") != std::string::npos);
      EXPECT(f[1].find("code=unknown_type subject=5") != std::string::npos);
    }
  });

  run("bus: a device's answers number 0, 1, 2... whatever it answered", [&] {
    Rig rig(5, true);
    rig.print = false;
    for (int i = 0; i < 300; i++) rig.send([](pp::FrameBuilder& b, uint8_t s) { poll(b, s, 5); });
    std::vector<std::string> f = rig.frames();
    EXPECT_EQ(f.size(), 300);
    for (size_t i = 0; i < f.size(); i++) {
      if (f[i].find("sequence=" + std::to_string(i % 256) + " ") == std::string::npos) {
        fail("answer %zu: %s", i, f[i].c_str());
        break;
      }
    }
  });

  printf("host tests: %d passed, %d failed\n", g_passed, g_failed);
  return g_failed ? 1 : 0;
}
