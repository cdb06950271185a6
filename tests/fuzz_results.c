/* fuzz_results.c: the poses.csv, matrix.csv, matrix.bin and result.json readers of a
 * results folder on arbitrary bytes (the first byte picks the reader, the
 * rest is the file). */
#include "harness/results/matrix_csv.h"
#include "harness/results/poses_csv.h"
#include "harness/results/result_json.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (!size) return 0;
    char path[256];
    struct err e;
    int which = data[0] % 4;
    if (!fuzz_file(path, sizeof path, "results.file", data + 1, size - 1)) return 0;
    if (which == 0) {
        struct poses_csv p;
        if (!poses_csv_read(path, &p, &e)) poses_csv_free(&p);
    } else if (which == 1) {
        struct matrix_csv m;
        if (!matrix_csv_read(path, &m, &e)) matrix_csv_free(&m);
    } else if (which == 3) {
        struct matrix_csv m;
        if (!matrix_csv_bin_read(path, &m, &e)) matrix_csv_free(&m);
    } else {
        cJSON *r = result_json_load(path, &e);
        struct protocol p;
        struct result_metric m;
        if (r) {
            result_json_status(r, path, &e);
            result_json_protocol(r, &p);
            result_json_metric(r, "f1max", &m);
        }
        cJSON_Delete(r);
    }
    return 0;
}
