/* junit.c: JUnit XML for CI systems. */
#include "harness/results/junit.h"

#include "harness/base/fileio.h"

void junit_escape(FILE *f, const char *s)
{
    for (const unsigned char *p = (const unsigned char *)s; p && *p; p++) {
        switch (*p) {
        case '&': fputs("&amp;", f); break;
        case '<': fputs("&lt;", f); break;
        case '>': fputs("&gt;", f); break;
        case '"': fputs("&quot;", f); break;
        case '\'': fputs("&apos;", f); break;
        default:
            /* XML 1.0 allows tab, newline and carriage return only below 0x20. */
            if (*p < 0x20 && *p != '\t' && *p != '\n' && *p != '\r') fputc('?', f);
            else fputc(*p, f);
        }
    }
}

int junit_write(const char *path, const char *suite, const struct junit_case *c, size_t n, struct err *e)
{
    struct afile a;
    size_t fails = 0;
    for (size_t k = 0; k < n; k++) fails += !c[k].pass;
    if (afile_open(&a, path, e)) return -1;
    fprintf(a.f, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites tests=\"%zu\" failures=\"%zu\">\n", n, fails);
    fputs("  <testsuite name=\"", a.f);
    junit_escape(a.f, suite);
    fprintf(a.f, "\" tests=\"%zu\" failures=\"%zu\" errors=\"0\" skipped=\"0\">\n", n, fails);
    for (size_t k = 0; k < n; k++) {
        fputs("    <testcase classname=\"", a.f);
        junit_escape(a.f, c[k].classname);
        fputs("\" name=\"", a.f);
        junit_escape(a.f, c[k].name);
        if (c[k].pass) { fputs("\"/>\n", a.f); continue; }
        fputs("\">\n      <failure message=\"", a.f);
        junit_escape(a.f, c[k].message ? c[k].message : "criterion not met");
        fputs("\" type=\"criterion\">", a.f);
        junit_escape(a.f, c[k].message ? c[k].message : "criterion not met");
        fputs("</failure>\n    </testcase>\n", a.f);
    }
    fputs("  </testsuite>\n</testsuites>\n", a.f);
    return afile_commit(&a, e);
}
