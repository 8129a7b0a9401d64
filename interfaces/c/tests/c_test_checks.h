/* Check macros of the C interface tests: a failed check prints its place and
 * counts in `failures` (each test program defines it); the program decides at
 * the end. */
#ifndef NKIT_C_TEST_CHECKS_H
#define NKIT_C_TEST_CHECKS_H

#include <stdio.h>
#include <string.h>

#include "nkit_c.h"

extern int failures;

#define CHECK(condition)                                                            \
  do {                                                                              \
    if (!(condition)) {                                                             \
      fprintf(stderr, "%s:%d: check failed: %s\n", __FILE__, __LINE__, #condition); \
      ++failures;                                                                   \
    }                                                                               \
  } while (0)
#define CHECK_STATUS(call, expected)                                                                        \
  do {                                                                                                      \
    nkit_status status_ = (call);                                                                           \
    if (status_ != (expected)) {                                                                            \
      fprintf(stderr, "%s:%d: %s returned %d, expected %d (%s)\n", __FILE__, __LINE__, #call, (int)status_, \
              (int)(expected), nkit_last_error_message());                                                  \
      ++failures;                                                                                           \
    }                                                                                                       \
  } while (0)
#define CHECK_MESSAGE(text) CHECK(strstr(nkit_last_error_message(), (text)) != NULL)

#endif /* NKIT_C_TEST_CHECKS_H */
