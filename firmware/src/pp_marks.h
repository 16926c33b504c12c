// Marker writes for measuring the firmware's own cost in an emulator: the library writes a
// section number into GPIOR0 (one OUT instruction, one cycle) as it enters each part of the
// work, and GPIOR1 (the type byte) when a frame has gone out. A simulator watching those registers sums exact
// cycle counts per section (firmware/sim/). On hardware and on the host they cost nothing
// unless PP_MARKERS is defined.
#pragma once

#define PP_MARK_IDLE 0
#define PP_MARK_RECEIVE 1  // a byte through COBS and the running CRC
#define PP_MARK_FRAME 2    // a finished frame: header and payload checks, values into the table
#define PP_MARK_FOLLOW 3   // the panel driving its outputs toward new values (sketch code)
#define PP_MARK_ENCODE 4   // a seen report: asking the panel what it shows, building, CRC, COBS
#define PP_MARK_WRITE 5    // handing the wire bytes to the port
#define PP_MARK_SCAN 6     // the periodic look for changes (inputs, a moving needle) and the heartbeat

#if defined(PP_MARKERS) && PP_MARKERS && defined(__AVR__)
#include <avr/io.h>
#define PP_MARK(section) (GPIOR0 = (section))
#define PP_MARK_SENT(type) (GPIOR1 = (type))
#else
#define PP_MARK(section) ((void)0)
#define PP_MARK_SENT(type) ((void)(type))
#endif
