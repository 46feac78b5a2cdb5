/*
 * The yardstick for `npm run bench -- --cli-mb N`: a minimal single-pass C decoder of a raw
 * one-byte-per-sample capture with a clock, doing the same work as the CLI's hot path and
 * nothing else: clock edge detection, NRZ data sampling on the edge (level of the sample
 * before it), HDLC deframing per link (flag 01111110, deletion of the 0 after five 1s, abort
 * on seven 1s; ISO/IEC 13239) and a table-driven FCS-16 check (CRC-16/IBM-SDLC, good residue
 * 0xF0B8, RFC 1662 appendix C). No output per frame: it prints the frame counts at the end.
 *
 *   reference <file> <clock bit> <rising|falling> <data bit> [<data bit>...]
 */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAX_LINKS 8
#define MAX_FRAME 65536

static uint16_t table16[256];

struct link {
  int bit;
  int ones;
  int in_frame;
  int len; /* data bits in the frame so far */
  uint32_t acc;
  uint8_t buf[MAX_FRAME];
  long frames, good;
};

static void close_frame(struct link *l, int len, int aborted) {
  if (!aborted && len >= 32 && (len & 7) == 0 && (len >> 3) <= MAX_FRAME) {
    int n = len >> 3;
    uint16_t r = 0xffff;
    for (int i = 0; i < n; i++) r = (r >> 8) ^ table16[(r ^ l->buf[i]) & 0xff];
    if (r == 0xf0b8) l->good++;
  }
  if (len > 0) l->frames++;
}

static inline void line_bit(struct link *l, int b) {
  if (b) {
    l->ones++;
    if (l->in_frame) {
      if (l->ones <= 5) {
        int len = l->len;
        l->acc |= 1u << (len & 7);
        if ((len & 7) == 7) {
          if ((len >> 3) < MAX_FRAME) l->buf[len >> 3] = (uint8_t)l->acc;
          l->acc = 0;
        }
        l->len = len + 1;
      } else if (l->ones == 7) {
        close_frame(l, l->len - 5, 1);
        l->in_frame = 0;
      }
    }
  } else {
    if (l->ones == 6) {
      /* flag: the frame ends before the flag's first 0, taken as data with five of its 1s */
      if (l->in_frame) close_frame(l, l->len - 6, 0);
      l->in_frame = 1;
      l->len = 0;
      l->acc = 0;
    } else if (l->in_frame && l->ones != 5) {
      int len = l->len;
      if ((len & 7) == 7) {
        if ((len >> 3) < MAX_FRAME) l->buf[len >> 3] = (uint8_t)l->acc;
        l->acc = 0;
      }
      l->len = len + 1;
    }
    l->ones = 0;
  }
}

int main(int argc, char **argv) {
  if (argc < 5) {
    fprintf(stderr, "usage: reference <file> <clock bit> <rising|falling> <data bit>...\n");
    return 2;
  }
  for (int i = 0; i < 256; i++) {
    uint16_t r = (uint16_t)i;
    for (int k = 0; k < 8; k++) r = (r & 1) ? (r >> 1) ^ 0x8408 : r >> 1;
    table16[i] = r;
  }
  FILE *f = fopen(argv[1], "rb");
  if (!f) {
    perror(argv[1]);
    return 2;
  }
  int clock = atoi(argv[2]);
  int active = strcmp(argv[3], "rising") == 0 ? 1 : 0;
  int nlinks = argc - 4;
  if (nlinks > MAX_LINKS) nlinks = MAX_LINKS;
  struct link *links = calloc((size_t)nlinks, sizeof(struct link));
  for (int k = 0; k < nlinks; k++) links[k].bit = atoi(argv[4 + k]);
  static uint8_t block[1 << 20];
  size_t got;
  int prev = -1;
  long samples = 0;
  while ((got = fread(block, 1, sizeof block, f)) > 0) {
    size_t i = 0;
    if (prev < 0) prev = block[i++];
    for (; i < got; i++) {
      int b = block[i];
      if (b != prev) {
        if ((((b ^ prev) >> clock) & 1) && ((b >> clock) & 1) == active)
          for (int k = 0; k < nlinks; k++) line_bit(&links[k], (prev >> links[k].bit) & 1);
        prev = b;
      }
    }
    samples += (long)got;
  }
  fclose(f);
  long frames = 0, good = 0;
  for (int k = 0; k < nlinks; k++) {
    frames += links[k].frames;
    good += links[k].good;
  }
  printf("%ld samples, %ld frames, %ld with a good FCS\n", samples, frames, good);
  free(links);
  return 0;
}
