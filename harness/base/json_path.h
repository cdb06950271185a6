/* json_path.h: where in a JSON text a value named by its path begins, so a
 * message about a checked value can give line and column.
 *
 *     text:  {"conditions": [{"name": "a"}, {"name": "b", "axis": 5}]}
 *     json_path_find(text, len, "conditions[1].axis", &off)
 *         -> off points at the key "axis" (a path ending in a key gives the
 *            key, one ending in an index gives the value)
 *
 * A path is keys joined by '.', with [N] for array elements; "" is the
 * whole text.  Keys are matched byte for byte against the text between the
 * quotes (a key written with escapes is not found).  With repeated keys the
 * first wins, as cJSON's lookup does.
 *
 * Failure contract: 0 with *offset set, or -1 when the path is not found or
 * the text is not JSON up to that point (*offset untouched).  Nothing is
 * allocated; thread-safe.
 */
#ifndef RV_JSON_PATH_H
#define RV_JSON_PATH_H

#include <stddef.h>

int json_path_find(const char *text, size_t len, const char *path, size_t *offset);

#endif
