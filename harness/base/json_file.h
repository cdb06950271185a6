/* json_file.h: write a cJSON tree as a file, printed with cJSON's
 * indentation, every number in round-trip form (harness/base/numfmt.h),
 * and one final newline, atomically (harness/base/fileio.h).
 *
 *     cJSON *root = cJSON_CreateObject();
 *     cJSON_AddStringToObject(root, "format", "revisit-summary-1");
 *     if (json_file_write("out/summary.json", root, e)) return -1;
 *
 * Ownership: json_file_write takes root and deletes it, on success and on
 * failure alike; root may be NULL (then it fails as out of memory).
 * Failure contract: 0, or -1 with "PATH: out of memory" or fileio_write's
 * message in e.  Thread-safe.
 */
#ifndef RV_JSON_FILE_H
#define RV_JSON_FILE_H

#include <cjson/cJSON.h>

#include "harness/base/err.h"

int json_file_write(const char *path, cJSON *root, struct err *e);

#endif
