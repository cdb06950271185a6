/* fileio.c: atomic writes and bounded whole-file reads. */
#include "harness/base/fileio.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

int afile_open(struct afile *a, const char *path, struct err *e)
{
    memset(a, 0, sizeof *a);
    if (strlen(path) >= sizeof a->path) return err_at(e, path, 0, "path too long");
    strcpy(a->path, path);
    static unsigned counter;  /* only makes names unique; not part of any result */
    unsigned k = __atomic_add_fetch(&counter, 1, __ATOMIC_RELAXED);
    snprintf(a->tmp, sizeof a->tmp, "%s.tmp.%ld.%u", path, (long)getpid(), k);
    int fd = open(a->tmp, O_WRONLY | O_CREAT | O_EXCL, 0644);
    if (fd < 0) return err_at(e, path, 0, "cannot create file: %s", strerror(errno));
    a->f = fdopen(fd, "wb");
    if (!a->f) {
        close(fd);
        unlink(a->tmp);
        return err_at(e, path, 0, "cannot open file: %s", strerror(errno));
    }
    return 0;
}

static int afile_fault(FILE *f)
{
    const char *lim = getenv("REVISIT_FAULT_WRITE_BYTES");
    if (!lim || !*lim) return 0;
    long pos = ftell(f);
    return pos > atol(lim);
}

int afile_commit(struct afile *a, struct err *e)
{
    int bad = 0, saved = 0;
    if (fflush(a->f) || ferror(a->f)) { bad = 1; saved = errno; }
    if (!bad && afile_fault(a->f)) { bad = 1; saved = ENOSPC; }
    if (!bad && fsync(fileno(a->f))) { bad = 1; saved = errno; }
    if (fclose(a->f) && !bad) { bad = 1; saved = errno; }
    a->f = NULL;
    if (!bad && rename(a->tmp, a->path)) { bad = 1; saved = errno; }
    if (bad) {
        unlink(a->tmp);
        return err_at(e, a->path, 0, "write failed: %s", strerror(saved ? saved : EIO));
    }
    return 0;
}

void afile_abort(struct afile *a)
{
    if (a->f) fclose(a->f);
    a->f = NULL;
    if (a->tmp[0]) unlink(a->tmp);
}

int fileio_write(const char *path, const void *data, size_t len, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    if (len && fwrite(data, 1, len, a.f) != len) {
        int saved = errno;
        afile_abort(&a);
        return err_at(e, path, 0, "write failed: %s", strerror(saved));
    }
    return afile_commit(&a, e);
}

int fileio_read(const char *path, size_t max_bytes, char **buf, size_t *len, struct err *e)
{
    *buf = NULL;
    *len = 0;
    FILE *f = fopen(path, "rb");
    if (!f) return err_at(e, path, 0, "cannot open: %s", strerror(errno));
    struct stat st;
    if (fstat(fileno(f), &st) || !S_ISREG(st.st_mode)) {
        fclose(f);
        return err_at(e, path, 0, "not a regular file");
    }
    if ((unsigned long long)st.st_size > max_bytes) {
        fclose(f);
        return err_at(e, path, 0, "file is %lld bytes, more than the limit of %zu",
                      (long long)st.st_size, max_bytes);
    }
    size_t n = (size_t)st.st_size;
    char *b = malloc(n + 1);
    if (!b) { fclose(f); return err_at(e, path, 0, "out of memory for %zu bytes", n); }
    size_t got = n ? fread(b, 1, n, f) : 0;
    int rerr = ferror(f);
    fclose(f);
    if (got != n || rerr) { free(b); return err_at(e, path, 0, "read failed after %zu of %zu bytes", got, n); }
    b[n] = 0;
    *buf = b;
    *len = n;
    return 0;
}

int fileio_mkdirs(const char *path, struct err *e)
{
    char tmp[4096];
    if (strlen(path) >= sizeof tmp) return err_at(e, path, 0, "path too long");
    strcpy(tmp, path);
    for (char *p = tmp + 1; ; p++) {
        if (*p == '/' || *p == 0) {
            char c = *p;
            *p = 0;
            if (mkdir(tmp, 0755) && errno != EEXIST)
                return err_at(e, tmp, 0, "cannot create folder: %s", strerror(errno));
            *p = c;
            if (!c) break;
        }
    }
    struct stat st;
    if (stat(path, &st) || !S_ISDIR(st.st_mode)) return err_at(e, path, 0, "not a folder");
    return 0;
}

int fileio_out_unused(const char *path, int replace, struct err *e)
{
    struct stat st;
    if (stat(path, &st)) {
        if (errno == ENOENT) return 0;
        return err_at(e, path, 0, "cannot read --out: %s", strerror(errno));
    }
    if (!S_ISDIR(st.st_mode))
        return err_set(e, "--out %s exists and is not a folder, expected a new or empty folder", path);
    if (replace) return 0;
    DIR *d = opendir(path);
    if (!d) return err_at(e, path, 0, "cannot open --out folder: %s", strerror(errno));
    size_t n = 0;
    char first[256] = "";
    struct dirent *de;
    while ((de = readdir(d))) {
        if (!strcmp(de->d_name, ".") || !strcmp(de->d_name, "..")) continue;
        if (!n++) snprintf(first, sizeof first, "%s", de->d_name);
    }
    closedir(d);
    if (!n) return 0;
    return err_set(e, "--out %s already holds %zu entr%s (first '%s'), expected a new or empty folder; "
                   "give --replace to write over it", path, n, n == 1 ? "y" : "ies", first);
}

void fileio_join(char *out, size_t n, const char *dir, const char *name)
{
    if (name[0] == '/' || !dir || !dir[0]) snprintf(out, n, "%s", name);
    else snprintf(out, n, "%s/%s", dir, name);
}

void fileio_dirname(char *out, size_t n, const char *path)
{
    const char *s = strrchr(path, '/');
    if (!s) snprintf(out, n, ".");
    else if (s == path) snprintf(out, n, "/");
    else snprintf(out, n, "%.*s", (int)(s - path), path);
}
