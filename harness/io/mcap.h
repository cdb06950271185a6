/* mcap.h: MCAP files walked record by record.
 *
 * The file is the magic "\x89MCAP0\r\n", records, and the magic again.  A
 * record is
 *
 *     | uint8 opcode | uint64 length | content (length bytes) |
 *
 * little-endian; a string is a uint32 length and the bytes, a byte array
 * a uint32 (or, in a chunk, uint64) length and the bytes.  Read here:
 * 0x03 schema (uint16 id, string name, string encoding, bytes data), 0x04
 * channel (uint16 id, uint16 schema id, string topic, string message
 * encoding, map metadata), 0x05 message (uint16 channel, uint32 sequence,
 * uint64 log time and publish time in ns, the rest: data) and 0x06 chunk
 * (uint64 start, end, unpacked size, uint32 crc, string compression = "" |
 * lz4 | zstd, uint64 length + records: schemas, channels, messages).  The
 * other opcodes (header, footer, indexes, statistics, attachments,
 * metadata, data end) are skipped; the summary's repeated schemas and
 * channels must agree with the first ones.  A channel's message encoding
 * "cdr" reads as CDR, "ros1" as ROS 1; its type is its schema's name.
 *
 * Every length is checked against the record or chunk that holds it, and a
 * chunk's CRC-32 of its unpacked records when it states one (not 0).
 * Failure contract as in logfile.h.
 */
#ifndef RV_MCAP_H
#define RV_MCAP_H

#include "harness/io/logfile.h"

/* Walk every message of an open MCAP file (l->kind == LOGF_MCAP). */
int mcap_walk(struct logf *l, logf_fn fn, void *ctx, struct err *e);

/* CRC-32 as MCAP states it (the ISO-HDLC / zlib polynomial 0xEDB88320,
 * reflected, initial and final XOR 0xFFFFFFFF) of n bytes, continuing from
 * crc (0 to start), so a stream may be summed in pieces:
 * mcap_crc32(mcap_crc32(0, a, na), b, nb) == mcap_crc32(0, ab, na + nb).
 * Cannot fail. */
uint32_t mcap_crc32(uint32_t crc, const void *data, size_t n);

#endif
