#!/bin/sh
# Flash and RAM of the library and the example, from avr-size (ATmega2560: 256 KB flash, 8 KB RAM).
# Flash = .text + .data (initial values live in flash); RAM = .data + .bss, before the stack.
set -eu
BUILD=$1
sizes() { avr-size -A "$1" | awk '$1==".text"{t=$2} $1==".data"{d=$2} $1==".bss"{b=$2} END{print t+0, d+0, b+0}'; }
row() {
  set -- "$1" $(sizes "$2")
  printf '%-44s flash %6d B   RAM %5d B  (text %d, data %d, bss %d)\n' "$1" $(($2 + $3)) $(($3 + $4)) "$2" "$3" "$4"
}
row "bench-panel example" "$BUILD/avr/panel/bench-panel.elf"
row "bench-panel, one lamp inverted (fault)" "$BUILD/avr/fault/bench-panel.elf"
row "bench-panel, 40 elements (benchmark)" "$BUILD/avr/wide/bench-panel.elf"
set -- $(sizes "$BUILD/avr/probe/probe.elf")
P_FLASH=$(($1 + $2)); P_RAM=$(($2 + $3))
set -- $(sizes "$BUILD/avr/probe/empty.elf")
E_FLASH=$(($1 + $2)); E_RAM=$(($2 + $3))
printf '%-44s flash %6d B   RAM %5d B  (probe minus an empty program; RAM includes a 1-element, 2-channel panel)\n' \
  "PanelproofLink library alone" $((P_FLASH - E_FLASH)) $((P_RAM - E_RAM))
