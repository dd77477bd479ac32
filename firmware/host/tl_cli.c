#define _POSIX_C_SOURCE 200809L /* strtok_r */
/*
 * tl_cli - a host command that builds telemetry lines with taperline_line.h, for the
 * tests. One request per input line, words separated by single spaces:
 *
 *   <kv|csv|json> <buffer bytes> <item> <item> ...
 *     t:<ms>                 device time from a millisecond clock
 *     m:<key>:<milli>:<d>    milli-units printed with d decimals
 *     i:<key>:<int>          a whole number (ADC counts)
 *     f:<key>:<0|1>          a status pin
 *     w:<key>:<word>         a one-word text
 *     x:<key>                a missing reading
 *   board <buffer bytes> <id> <fw>
 *
 * Output: the built line(s) as the board would send them (CSV: the header, then the
 * row), or `!<error bits>` for a line the library refused, then `=` on its own line.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../src/taperline_line.h"

static char *next_part(char **s) {
  char *p = *s, *c;
  if (p == NULL) return NULL;
  c = strchr(p, ':');
  if (c) {
    *c = 0;
    *s = c + 1;
  } else {
    *s = NULL;
  }
  return p;
}

static void add_item(tl_line *l, char *item) {
  char *rest = item;
  char *kind = next_part(&rest);
  char *key = next_part(&rest);
  char *value = next_part(&rest);
  char *dec = next_part(&rest);
  switch (kind[0]) {
  case 't': tl_time_ms(l, (uint32_t)strtoul(key, NULL, 10)); break;
  case 'm': tl_milli(l, key, (int32_t)strtol(value, NULL, 10), (uint8_t)atoi(dec)); break;
  case 'i': tl_int(l, key, (int32_t)strtol(value, NULL, 10)); break;
  case 'f': tl_flag(l, key, atoi(value)); break;
  case 'w': tl_word(l, key, value); break;
  case 'x': tl_missing(l, key); break;
  default: fprintf(stderr, "tl_cli: unknown item %s\n", item); exit(2);
  }
}

static char line_in[1 << 20];
static char items[1 << 20];
static char copy[1 << 20];

int main(void) {
  while (fgets(line_in, sizeof line_in, stdin)) {
    char *save = NULL;
    char *shape_word, *size_word, *tok;
    size_t size;
    char *buf;
    tl_line l;
    line_in[strcspn(line_in, "\n")] = 0;
    shape_word = strtok_r(line_in, " ", &save);
    size_word = strtok_r(NULL, " ", &save);
    if (!shape_word || !size_word) continue;
    size = (size_t)strtoul(size_word, NULL, 10);
    buf = malloc(size ? size : 1);
    if (strcmp(shape_word, "board") == 0) {
      char *id = strtok_r(NULL, " ", &save), *fw = strtok_r(NULL, " ", &save);
      uint16_t n;
      tl_init(&l, buf, size, TL_KV);
      n = tl_board(&l, id ? id : "", fw ? fw : "");
      if (n) fwrite(buf, 1, n, stdout);
      else printf("!%u\n", tl_error(&l));
    } else {
      uint8_t shape = strcmp(shape_word, "csv") == 0 ? TL_CSV : strcmp(shape_word, "json") == 0 ? TL_JSON : TL_KV;
      /* The items are kept so the CSV row can be built again after the header. */
      strcpy(items, save ? save : "");
      tl_init(&l, buf, size, shape);
      do {
        char *save2 = NULL;
        uint16_t n;
        strcpy(copy, items);
        tl_begin(&l);
        for (tok = strtok_r(copy, " ", &save2); tok; tok = strtok_r(NULL, " ", &save2)) add_item(&l, tok);
        n = tl_end(&l);
        if (n) fwrite(buf, 1, n, stdout);
        else printf("!%u\n", tl_error(&l));
      } while (tl_was_header(&l));
    }
    printf("=\n");
    fflush(stdout);
    free(buf);
  }
  return 0;
}
