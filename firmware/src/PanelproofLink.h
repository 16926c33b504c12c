// Panelproof link library: the device side of the Panelproof link protocol for Arduino-class
// boards. Include this one header from a sketch. See firmware/README.md.
#pragma once

#include "pp_protocol.h"
#include "pp_crc16.h"
#include "pp_cobs.h"
#include "pp_codec.h"
#include "pp_receiver.h"
#include "pp_device.h"
