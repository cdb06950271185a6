/* sha256.h: SHA-256 of a byte buffer (FIPS 180-4), as 64 hex digits.
 *
 *     char hex[65];
 *     sha256_hex(data, len, hex);
 *
 * Cannot fail.  No state; thread-safe.
 */
#ifndef RV_SHA256_H
#define RV_SHA256_H

#include <stddef.h>

void sha256_hex(const void *data, size_t len, char hex[65]);

#endif
