/* json_file.c: a cJSON tree printed into a file with a final newline. */
#include "harness/base/json_file.h"

#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/base/numfmt.h"

int json_file_write(const char *path, cJSON *root, struct err *e)
{
    char *text = root ? numfmt_json_print(root) : NULL;
    cJSON_Delete(root);
    if (!text) return err_at(e, path, 0, "out of memory");
    size_t len = strlen(text);
    text[len] = '\n';  /* replaces the NUL; len + 1 bytes written */
    int rc = fileio_write(path, text, len + 1, e);
    free(text);
    return rc;
}
