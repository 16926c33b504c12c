// panel-sim: runs a bench-panel ELF on simavr's ATmega2560 as if it were a board on a USB cable.
//
//   panel-sim [--cycles] [--hold] bench-panel.elf
//
// UART0 is bridged to a pseudo-terminal made here; its path is the first line on stdout
// ("pty /dev/pts/N"), so the bench opens it like any serial port. Emulated time is held to the
// wall clock (simavr alone runs 2-3x faster than a real board), so millis(), heartbeats and
// stepper speeds are real. What the firmware drives is watched at the pins, not taken from its
// memory: lamp outputs on PORTA, step pulses and direction (with a mechanical stop at 0, as a
// gauge needle has), and the MAX7219 readout decoded from its bit-banged serial lines.
//
// stdin commands, one per line:
//   state          -> "state ms=.. lamps=0x.. trip=.. steps=.. rises=.. dir=.. readout="........" behind=.. worst=.."
//                     (behind: ms the emulator is behind the wall clock now; worst: the most so far)
//   set C0 1       -> drive input pin PC0 high (1) or low (0): switches and the breaker
//   start          -> with --hold, power the board up (before it, the pty exists but the CPU waits)
//   cpu            -> (with --cycles) "cpu cycles=.. idle=.. receive=.. frame=.. follow=.. encode=.. write=.. scan=..
//                      isr_uart_rx=.. isr_uart_udre=.. isr_uart_tx=.. isr_timer0=.. isr_timer1=.. isr_other=.."
//                     every cycle since power-up, by where the CPU spent it (cumulative; take two
//                     readings and subtract for a window)
//   quit
// With --cycles, every frame the firmware sends prints the exact cycles it spent per section
// since the last one ("cycles type=82 receive=.. frame=.. follow=.. encode=.. write=.."), from
// the marker registers GPIOR0/GPIOR1 the library writes (firmware/src/pp_marks.h).
//
// Interrupts are told apart from the code they interrupt: when the CPU arrives at a vector the
// cycles go to that interrupt until its RETI pops the stack back past the entry frame, so the
// Arduino core's UART interrupts (which no marker can reach) are counted exactly, and never
// inside a marked section.
#define _GNU_SOURCE
#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include "avr_ioport.h"
#include "avr_uart.h"
#include "sim_avr.h"
#include "sim_elf.h"
#include "sim_io.h"
#include "sim_irq.h"

#define F_CPU 16000000ULL
#define PORTA_ADDR 0x22
#define DDRA_ADDR 0x21
#define PORTB_ADDR 0x25
#define GPIOR0_ADDR 0x3e  // I/O 0x1e
#define GPIOR1_ADDR 0x4a  // I/O 0x2a
#define SERVICE_CYCLES 3200  // look at the pty, stdin and the clock every 200 us of emulated time (UART FIFO: 64 bytes)
#define NEEDLE_STOP_MAX 900  // steps: the far stop, past full scale
#define SPL_ADDR 0x5d  // stack pointer, I/O 0x3d/0x3e
#define SPH_ADDR 0x5e
// The ATmega2560's 57 vectors are two-word JMPs at byte address 4 x number (datasheet, "Interrupts",
// vector table; avr-libc's iomxx0_1.h has the numbers).
#define VECTOR_COUNT 57
#define VEC_TIMER1_COMPA 17
#define VEC_TIMER0_OVF 23
#define VEC_USART0_RX 25
#define VEC_USART0_UDRE 26
#define VEC_USART0_TX 27

static avr_t* avr;
static int master = -1;
static int uartReady = 1;
static avr_irq_t* uartIn;
static uint8_t outBuf[65536];
static size_t outLen;
static uint8_t inBuf[256];
static size_t inLen, inAt;

static long needle;        // steps from the zero stop
static unsigned long rises;  // step pulses seen
static uint32_t maxShift;  // bits clocked into the MAX7219
static uint8_t maxDigits[9] = {0, 15, 15, 15, 15, 15, 15, 15, 15};  // digit registers 1..8, code B
static uint8_t maxDecode;
static uint8_t prevPortA, prevPortB;

static int printCycles;  // --cycles: count interrupts apart and print sections per frame sent
static unsigned markSection;
static avr_cycle_count_t markSince;
static unsigned long long markSums[8];   // per section since the last frame sent (--cycles lines)
static unsigned long long sectionTotals[8];  // per section since power-up, interrupts excluded
static unsigned long long isrTotals[VECTOR_COUNT];
static struct { uint8_t vector; uint16_t sp; } isrStack[8];
static int isrDepth;
static unsigned long behindMs, worstBehindMs;  // now, and the most since power-up
static uint8_t externalMask[26], externalValue[26];  // what the outside world holds on input pins

static void uartOutput(avr_irq_t* irq, uint32_t value, void* param) {
  (void)irq, (void)param;
  if (outLen < sizeof outBuf) outBuf[outLen++] = (uint8_t)value;  // a reader gone for 64 KB loses bytes
}
static void uartXon(avr_irq_t* irq, uint32_t value, void* param) { (void)irq, (void)value, (void)param, uartReady = 1; }
static void uartXoff(avr_irq_t* irq, uint32_t value, void* param) { (void)irq, (void)value, (void)param, uartReady = 0; }

// PORTA: bit 4 STEP (count on the rising edge, in the direction bit 5 says), bits 0-3 lamps.
static void portAWrite(struct avr_t* a, avr_io_addr_t addr, uint8_t v, void* param) {
  (void)param;
  a->data[addr] = v;
  if ((v & 0x10) && !(prevPortA & 0x10)) {
    rises++;
    needle += (v & 0x20) ? 1 : -1;
    // The needle cannot pass its stops: steps into a stop are lost, as on a real gauge.
    if (needle < 0) needle = 0;
    if (needle > NEEDLE_STOP_MAX) needle = NEEDLE_STOP_MAX;
  }
  prevPortA = v;
}

// PORTB: bit 1 CLK shifts bit 2 DIN in; a rising bit 0 LOAD latches the last 16 bits.
static void portBWrite(struct avr_t* a, avr_io_addr_t addr, uint8_t v, void* param) {
  (void)param;
  a->data[addr] = v;
  if ((v & 0x02) && !(prevPortB & 0x02)) maxShift = (maxShift << 1) | ((v >> 2) & 1);
  if ((v & 0x01) && !(prevPortB & 0x01)) {
    const uint8_t reg = (maxShift >> 8) & 0x0f, data = maxShift & 0xff;
    if (reg >= 1 && reg <= 8) maxDigits[reg] = data;
    if (reg == 9) maxDecode = data;
  }
  prevPortB = v;
}

// Cycles since the last account go to what the CPU was doing: the innermost interrupt, or the
// main program's current marked section.
static void account(avr_cycle_count_t now) {
  const unsigned long long spent = now - markSince;
  if (isrDepth) {
    isrTotals[isrStack[isrDepth - 1].vector] += spent;
  } else {
    markSums[markSection & 7] += spent;
    sectionTotals[markSection & 7] += spent;
  }
  markSince = now;
}

// After each instruction: did an interrupt return (the stack is back above its entry frame), or
// did the CPU just arrive at a vector? `before` is the cycle count before the instruction, so
// the instruction that was interrupted and the five-cycle entry both count to the interrupt:
// at most a couple of cycles too many, never too few.
static void watchInterrupts(avr_cycle_count_t before) {
  const uint16_t sp = (uint16_t)(avr->data[SPL_ADDR] | (avr->data[SPH_ADDR] << 8));
  while (isrDepth && sp > isrStack[isrDepth - 1].sp) {
    account(avr->cycle);
    isrDepth--;
  }
  const uint32_t pc = avr->pc;
  if (pc && pc < VECTOR_COUNT * 4 && (pc & 3) == 0 && isrDepth < 8) {
    account(before);
    isrStack[isrDepth].vector = (uint8_t)(pc / 4);
    isrStack[isrDepth].sp = sp;
    isrDepth++;
  }
}

static void markWrite(struct avr_t* a, avr_io_addr_t addr, uint8_t v, void* param) {
  (void)param;
  a->data[addr] = v;
  account(a->cycle);
  if (addr == GPIOR0_ADDR) {
    markSection = v & 7;
    return;
  }
  // GPIOR1: a frame (its type byte in v) has gone out.
  if (printCycles)
    printf("cycles type=%02x receive=%llu frame=%llu follow=%llu encode=%llu write=%llu\n", v, markSums[1], markSums[2],
           markSums[3], markSums[4], markSums[5]);
  for (int i = 1; i < 8; i++) markSums[i] = 0;
}

// An input pin held by the outside world (a switch contact). Set as the port's external value
// too, so the firmware's pull-up write does not override it, then raised for the PIN register.
static void holdPin(char port, int bit, int level) {
  const int i = port - 'A';
  externalMask[i] |= (uint8_t)(1 << bit);
  externalValue[i] = (uint8_t)((externalValue[i] & ~(1 << bit)) | ((level ? 1 : 0) << bit));
  avr_ioport_external_t e = {.name = (unsigned long)port, .mask = externalMask[i], .value = externalValue[i]};
  avr_ioctl(avr, AVR_IOCTL_IOPORT_SET_EXTERNAL(port), &e);
  avr_raise_irq(avr_io_getirq(avr, AVR_IOCTL_IOPORT_GETIRQ(port), bit), level ? 1 : 0);
}

static const char* readoutText(char* out) {
  static const char glyphs[] = "0123456789-EHLP ";
  for (int k = 0; k < 8; k++) {
    const uint8_t d = maxDigits[8 - k];  // digit 1 is the rightmost
    out[k] = (maxDecode & (1 << (7 - k))) ? glyphs[d & 0x0f] : '?';  // no-decode digits are not text
  }
  out[8] = 0;
  return out;
}

static uint64_t nowNs(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (uint64_t)t.tv_sec * 1000000000ULL + (uint64_t)t.tv_nsec;
}

static void command(char* line) {
  char port;
  int bit, level;
  if (strncmp(line, "state", 5) == 0) {
    char text[9];
    const uint8_t outputs = avr->data[PORTA_ADDR] & avr->data[DDRA_ADDR];
    printf("state ms=%llu lamps=0x%x trip=%d steps=%ld rises=%lu dir=%d readout=\"%s\" behind=%lu worst=%lu\n",
           (unsigned long long)(avr->cycle / (F_CPU / 1000)), outputs & 0x07, (outputs >> 3) & 1, needle, rises,
           (outputs >> 5) & 1, readoutText(text), behindMs, worstBehindMs);
  } else if (sscanf(line, "set %c%d %d", &port, &bit, &level) == 3 && port >= 'A' && port <= 'L' && bit >= 0 && bit < 8) {
    holdPin(port, bit, level);
    printf("ok set %c%d %d\n", port, bit, level ? 1 : 0);
  } else if (strncmp(line, "cpu", 3) == 0 && !printCycles) {
    printf("error cpu needs --cycles (interrupts are only told apart then)\n");
  } else if (strncmp(line, "cpu", 3) == 0) {
    account(avr->cycle);
    unsigned long long other = 0;
    for (int v = 0; v < VECTOR_COUNT; v++)
      if (v != VEC_USART0_RX && v != VEC_USART0_UDRE && v != VEC_USART0_TX && v != VEC_TIMER0_OVF && v != VEC_TIMER1_COMPA) other += isrTotals[v];
    printf("cpu cycles=%llu idle=%llu receive=%llu frame=%llu follow=%llu encode=%llu write=%llu scan=%llu other=%llu "
           "isr_uart_rx=%llu isr_uart_udre=%llu isr_uart_tx=%llu isr_timer0=%llu isr_timer1=%llu isr_other=%llu\n",
           (unsigned long long)avr->cycle, sectionTotals[0], sectionTotals[1], sectionTotals[2], sectionTotals[3],
           sectionTotals[4], sectionTotals[5], sectionTotals[6], sectionTotals[7], isrTotals[VEC_USART0_RX],
           isrTotals[VEC_USART0_UDRE], isrTotals[VEC_USART0_TX], isrTotals[VEC_TIMER0_OVF], isrTotals[VEC_TIMER1_COMPA], other);
  } else if (strncmp(line, "quit", 4) == 0) {
    exit(0);
  } else {
    printf("error unknown command: %s\n", line);
  }
  fflush(stdout);
}

static void service(uint64_t startNs) {
  // Board to bench: whatever the UART sent since last time.
  if (outLen) {
    ssize_t n = write(master, outBuf, outLen);
    if (n > 0) {
      memmove(outBuf, outBuf + n, outLen - (size_t)n);
      outLen -= (size_t)n;
    }
  }
  // Bench to board: only while the UART's input FIFO has room (it says so with XON/XOFF).
  while (uartReady) {
    if (inAt == inLen) {
      ssize_t n = read(master, inBuf, sizeof inBuf);
      if (n <= 0) break;
      inLen = (size_t)n;
      inAt = 0;
    }
    avr_raise_irq(uartIn, inBuf[inAt++]);
  }
  static char line[256];
  static size_t lineLen;
  struct pollfd p = {.fd = 0, .events = POLLIN};
  while (poll(&p, 1, 0) > 0) {
    // stdin closed (a pipe whose writer is gone reports POLLHUP, not always POLLIN): the test is
    // gone, and a board left running would spin a core for nobody.
    if (!(p.revents & POLLIN)) exit(0);
    char c;
    if (read(0, &c, 1) != 1) exit(0);
    if (c == '\n') {
      line[lineLen] = 0;
      command(line);
      lineLen = 0;
    } else if (lineLen < sizeof line - 1) {
      line[lineLen++] = c;
    }
  }
  // Hold emulated time to the wall clock: sleep while ahead, note it when behind.
  const uint64_t emulated = avr->cycle * 1000ULL / (F_CPU / 1000000ULL);
  const uint64_t wall = nowNs() - startNs;
  if (emulated > wall + 200000) {
    struct timespec t = {.tv_sec = 0, .tv_nsec = (long)(emulated - wall)};
    nanosleep(&t, NULL);
  } else if (wall > emulated + 1000000) {
    // Behind (the machine is busy): run flat out until caught up.
    behindMs = (unsigned long)((wall - emulated) / 1000000);
    if (behindMs > worstBehindMs) worstBehindMs = behindMs;
  } else {
    behindMs = 0;
  }
}

static int openPty(void) {
  int fd = posix_openpt(O_RDWR | O_NOCTTY);
  if (fd < 0 || grantpt(fd) || unlockpt(fd)) return -1;
  // Keep the far end open ourselves: a pty whose last reader closes returns EIO to the master,
  // which would kill the board the first time the bench reconnects.
  int slave = open(ptsname(fd), O_RDWR | O_NOCTTY);
  struct termios t;
  if (slave < 0 || tcgetattr(slave, &t)) return -1;
  cfmakeraw(&t);
  tcsetattr(slave, TCSANOW, &t);
  fcntl(fd, F_SETFL, fcntl(fd, F_GETFL) | O_NONBLOCK);
  return fd;
}

int main(int argc, char** argv) {
  const char* path = NULL;
  int hold = 0;
  for (int i = 1; i < argc; i++) {
    if (strcmp(argv[i], "--cycles") == 0) printCycles = 1;
    else if (strcmp(argv[i], "--hold") == 0) hold = 1;
    else path = argv[i];
  }
  if (!path) {
    fprintf(stderr, "usage: panel-sim [--cycles] [--hold] bench-panel.elf\n");
    return 2;
  }
  setvbuf(stdout, NULL, _IOLBF, 0);
  signal(SIGPIPE, SIG_IGN);
  elf_firmware_t firmware;
  memset(&firmware, 0, sizeof firmware);
  if (elf_read_firmware(path, &firmware)) {
    fprintf(stderr, "panel-sim: cannot read %s\n", path);
    return 1;
  }
  avr = avr_make_mcu_by_name("atmega2560");
  if (!avr) return 1;
  avr_init(avr);
  avr_load_firmware(avr, &firmware);
  avr->frequency = F_CPU;
  avr->log = LOG_ERROR;

  // No console echo of the UART, and no sleeping when the firmware polls it: we pace time ourselves.
  uint32_t flags = 0;
  avr_ioctl(avr, AVR_IOCTL_UART_GET_FLAGS('0'), &flags);
  flags &= ~(AVR_UART_FLAG_STDIO | AVR_UART_FLAG_POLL_SLEEP);
  avr_ioctl(avr, AVR_IOCTL_UART_SET_FLAGS('0'), &flags);
  avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUTPUT), uartOutput, NULL);
  avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUT_XON), uartXon, NULL);
  avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUT_XOFF), uartXoff, NULL);
  uartIn = avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_INPUT);

  // Watch PORTA and PORTB writes after the ioport module's own handler (which we chain to).
  avr_register_io_write(avr, PORTA_ADDR, portAWrite, NULL);
  avr_register_io_write(avr, PORTB_ADDR, portBWrite, NULL);
  avr_register_io_write(avr, GPIOR0_ADDR, markWrite, NULL);
  avr_register_io_write(avr, GPIOR1_ADDR, markWrite, NULL);

  // Inputs as wired at rest: battery and landing-light contacts open (pulled up), breaker in
  // (its contact closes PC3 to ground).
  for (int bit = 0; bit < 3; bit++) holdPin('C', bit, 1);
  holdPin('C', 3, 0);

  master = openPty();
  if (master < 0) {
    perror("panel-sim: pty");
    return 1;
  }
  printf("pty %s\n", ptsname(master));
  // --hold: power the board up only once the bench has its port open, so it hears the power-up hello.
  // Byte by byte on fd 0, as service() reads it: stdio buffering would swallow later commands.
  for (char word[64]; hold;) {
    size_t n = 0;
    char c = 0;
    while (n < sizeof word - 1 && read(0, &c, 1) == 1 && c != '\n') word[n++] = c;
    word[n] = 0;
    if (c != '\n' && n == 0) return 0;  // stdin closed before start
    if (strncmp(word, "start", 5) == 0) break;
  }

  const uint64_t start = nowNs();
  avr_cycle_count_t nextService = 0;
  markSince = avr->cycle;
  for (;;) {
    const avr_cycle_count_t before = avr->cycle;
    const int state = avr_run(avr);
    // Watching for interrupts costs the emulator a good part of its speed: only when counting.
    if (printCycles) watchInterrupts(before);
    if (state == cpu_Done || state == cpu_Crashed) {
      printf("stopped %s at cycle %llu\n", state == cpu_Done ? "done" : "crashed", (unsigned long long)avr->cycle);
      return 1;
    }
    if (avr->cycle >= nextService) {
      nextService = avr->cycle + SERVICE_CYCLES;
      service(start);
    }
  }
}
