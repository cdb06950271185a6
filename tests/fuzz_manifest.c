/* fuzz_manifest.c: recording.json loading on arbitrary bytes (with two tiny
 * scans and a pose file beside it, so a well-formed manifest gets far). */
#include "harness/io/recording.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char path[256], other[256];
    static const float pt[4] = {1, 2, 3, 4};
    fuzz_file(other, sizeof other, "0.bin", (const uint8_t *)pt, sizeof pt);
    fuzz_file(other, sizeof other, "1.bin", (const uint8_t *)pt, sizeof pt);
    static const char poses[] = "t,x,y,z,qx,qy,qz,qw\n0,0,0,0,0,0,0,1\n1,1,0,0,0,0,0,1\n";
    fuzz_file(other, sizeof other, "poses.csv", (const uint8_t *)poses, sizeof poses - 1);
    if (!fuzz_file(path, sizeof path, "recording.json", data, size)) return 0;
    struct recording r;
    struct err e;
    if (!recording_load(path, 0, &r, &e)) recording_free(&r);
    return 0;
}
