/*
 * Host-gcc harness for the wasm2c build of the firmware: a port whose hardware is a script.
 * It implements exactly the semantics of firmware/test/scripted-port.ts (the same script runs
 * the release wasm there), so the two serial outputs must be byte-identical.
 *
 * Usage: harness SCRIPT   — the firmware's serial output goes to stdout; a trap or a firmware
 * that never goes idle ends the run with exit status 3 or 4 and a message on stderr.
 * Script lines: see scripted-port.ts.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "henrytick-rt.h"
#include "henrytick.h"

#define MAX_POLLS 1000000

struct Z_hal_instance_t {
  int unused;
};

typedef struct {
  int n;
  int32_t* at;
  int32_t* words;
  int32_t stuck_at; /* -1: never */
  int32_t stuck_count;
} record_t;

typedef struct {
  record_t* items;
  int len, head;
} queue_t;

static Z_henrytick_instance_t fw;
static struct Z_hal_instance_t hal;
static uint32_t now_ticks = 0;
static uint32_t device_id = 0;
static uint32_t capture_bits = 0;
static queue_t captures, listens;
static int32_t next_stuck_at = -1, next_stuck_count = 0;

static struct {
  record_t rec;
  uint32_t open_tick, buf, capacity, written;
  int stopped, live;
} active;

void ht_port_trap(wasm_rt_trap_t code) {
  fprintf(stderr, "firmware trap: %s\n", wasm_rt_strerror(code));
}

static void push(queue_t* q, record_t r) {
  q->items = realloc(q->items, sizeof(record_t) * (size_t)(q->len + 1));
  q->items[q->len++] = r;
}

static record_t pop(queue_t* q) {
  record_t none = {0, NULL, NULL, -1, 0};
  if (q->head >= q->len) return none;
  return q->items[q->head++];
}

static uint32_t count_entries(void) {
  if (!active.live) return 0;
  if (active.stopped) return active.written;
  int32_t elapsed = (int32_t)(now_ticks - active.open_tick);
  uint8_t* mem = fw.w2c_memory.data;
  while ((int)active.written < active.rec.n && active.written < active.capacity &&
         active.rec.at[active.written] <= elapsed) {
    int32_t w = active.rec.words[active.written];
    memcpy(mem + active.buf + 4u * active.written, &w, 4); /* wasm memory is little-endian */
    active.written++;
  }
  if (active.rec.stuck_at >= 0 && elapsed >= active.rec.stuck_at) return (uint32_t)active.rec.stuck_count;
  return active.written;
}

/* ---- the HAL, as wasm2c names its imports ---- */
u32 Z_halZ_now(struct Z_hal_instance_t* h) { (void)h; return now_ticks; }
void Z_halZ_select(struct Z_hal_instance_t* h, u32 drive, u32 tank) { (void)h; (void)drive; (void)tank; }
void Z_halZ_pulse(struct Z_hal_instance_t* h, u32 charge, u32 buf, u32 capacity) {
  (void)h;
  int listen = charge == 0;
  active.rec = pop(listen ? &listens : &captures);
  if (!listen && next_stuck_at >= 0) {
    active.rec.stuck_at = next_stuck_at;
    active.rec.stuck_count = next_stuck_count;
    next_stuck_at = -1;
  }
  active.open_tick = now_ticks + charge;
  active.buf = buf;
  active.capacity = capacity;
  active.written = 0;
  active.stopped = 0;
  active.live = 1;
}
u32 Z_halZ_capture_count(struct Z_hal_instance_t* h) { (void)h; return count_entries(); }
void Z_halZ_stop(struct Z_hal_instance_t* h) {
  (void)h;
  count_entries();
  active.stopped = 1;
}
void Z_halZ_uart_write(struct Z_hal_instance_t* h, u32 ptr, u32 len) {
  (void)h;
  fwrite(fw.w2c_memory.data + ptr, 1, len, stdout);
}
u32 Z_halZ_device_id(struct Z_hal_instance_t* h) { (void)h; return device_id; }
u32 Z_halZ_capture_bits(struct Z_hal_instance_t* h) { (void)h; return capture_bits; }

/* ---- running the firmware ---- */
static void guard_failed(void) {
  fflush(stdout);
  exit(3);
}

static void run(void) {
  if (!HT_RT_TRY()) guard_failed();
  for (int i = 0; i < MAX_POLLS; i++) {
    int32_t wait = (int32_t)Z_henrytickZ_fw_poll(&fw);
    if (wait <= 0 || Z_henrytickZ_fw_busy(&fw) == 0) {
      HT_RT_DONE();
      return;
    }
    now_ticks += (uint32_t)wait;
  }
  fflush(stdout);
  fprintf(stderr, "firmware did not go idle\n");
  exit(4);
}

static void rx(const char* hex) {
  size_t n = strlen(hex) / 2;
  for (size_t i = 0; i < n; i++) {
    unsigned b;
    sscanf(hex + 2 * i, "%2x", &b);
    for (;;) {
      if (!HT_RT_TRY()) guard_failed();
      uint32_t taken = Z_henrytickZ_fw_rx(&fw, b);
      HT_RT_DONE();
      if (taken) break;
      run();
    }
  }
  run();
}

/* Instantiates the firmware and runs its init, once the script's settings (id, bits) are read. */
static void start_firmware(void) {
  wasm_rt_init();
  Z_henrytick_init_module();
  if (!HT_RT_TRY()) guard_failed();
  Z_henrytick_instantiate(&fw, &hal);
  ht_rt_require_memory(Z_henrytickZ_fw_memory_used(&fw));
  Z_henrytickZ_fw_init(&fw);
  HT_RT_DONE();
}

static record_t parse_record(char** save) {
  record_t r = {0, NULL, NULL, -1, 0};
  r.n = atoi(strtok_r(NULL, " \t\r\n", save));
  r.at = malloc(sizeof(int32_t) * (size_t)(r.n + 1));
  r.words = malloc(sizeof(int32_t) * (size_t)(r.n + 1));
  for (int i = 0; i < r.n; i++) {
    r.at[i] = (int32_t)strtol(strtok_r(NULL, " \t\r\n", save), NULL, 10);
    r.words[i] = (int32_t)strtoll(strtok_r(NULL, " \t\r\n", save), NULL, 10);
  }
  return r;
}

int main(int argc, char** argv) {
  if (argc != 2) {
    fprintf(stderr, "usage: %s SCRIPT\n", argv[0]);
    return 2;
  }
  FILE* f = fopen(argv[1], "r");
  if (!f) {
    perror(argv[1]);
    return 2;
  }
  char* line = NULL;
  size_t cap = 0;
  int started = 0;
  while (getline(&line, &cap, f) >= 0) {
    char* hash = strchr(line, '#');
    if (hash) *hash = 0;
    char* save = NULL;
    char* cmd = strtok_r(line, " \t\r\n", &save);
    if (!cmd) continue;
    if (!started && strcmp(cmd, "id") == 0) {
      device_id = (uint32_t)strtoul(strtok_r(NULL, " \t\r\n", &save), NULL, 10);
      continue;
    }
    if (!started && strcmp(cmd, "bits") == 0) {
      capture_bits = (uint32_t)strtoul(strtok_r(NULL, " \t\r\n", &save), NULL, 10);
      continue;
    }
    if (!started) {
      start_firmware();
      started = 1;
    }
    if (strcmp(cmd, "capture") == 0) push(&captures, parse_record(&save));
    else if (strcmp(cmd, "heard") == 0) push(&listens, parse_record(&save));
    else if (strcmp(cmd, "stuck") == 0) {
      next_stuck_at = (int32_t)strtol(strtok_r(NULL, " \t\r\n", &save), NULL, 10);
      next_stuck_count = (int32_t)strtol(strtok_r(NULL, " \t\r\n", &save), NULL, 10);
    } else if (strcmp(cmd, "rx") == 0) rx(strtok_r(NULL, " \t\r\n", &save));
    else if (strcmp(cmd, "idle") == 0) {
      now_ticks += (uint32_t)strtoul(strtok_r(NULL, " \t\r\n", &save), NULL, 10);
      run();
    } else if (strcmp(cmd, "overrun") == 0) {
      if (!HT_RT_TRY()) guard_failed();
      Z_henrytickZ_fw_rx_overrun(&fw);
      HT_RT_DONE();
    } else {
      fprintf(stderr, "script: unknown line %s\n", cmd);
      return 2;
    }
  }
  free(line);
  if (!started) start_firmware();
  fflush(stdout);
  return 0;
}
