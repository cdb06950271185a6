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

/* The kind of a non-regular file, for messages. */
static const char *fileio_kind(mode_t m)
{
    return S_ISDIR(m) ? "a folder" : S_ISFIFO(m) ? "a FIFO" : S_ISCHR(m) ? "a character device"
         : S_ISBLK(m) ? "a block device" : S_ISSOCK(m) ? "a socket" : "not a plain file";
}

int fileio_open_regular(const char *path, const char *what, int *fd, size_t *size, struct err *e)
{
    /* O_NONBLOCK: opening a FIFO without a writer would otherwise wait for ever */
    *fd = open(path, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
    if (*fd < 0) return err_at(e, path, 0, "cannot open: %s", strerror(errno));
    struct stat st;
    int rc = 0, flags;
    if (fstat(*fd, &st))
        rc = err_at(e, path, 0, "cannot stat: %s", strerror(errno));
    else if (!S_ISREG(st.st_mode))
        rc = err_at(e, path, 0, "not a regular file (%s), expected %s", fileio_kind(st.st_mode), what);
    else if ((flags = fcntl(*fd, F_GETFL)) < 0 || fcntl(*fd, F_SETFL, flags & ~O_NONBLOCK) < 0)
        rc = err_at(e, path, 0, "cannot set blocking reads: %s", strerror(errno));
    if (rc) {
        close(*fd);
        *fd = -1;
        return -1;
    }
    if (size) *size = (size_t)st.st_size;
    return 0;
}

int fileio_read(const char *path, size_t max_bytes, char **buf, size_t *len, struct err *e)
{
    *buf = NULL;
    *len = 0;
    int fd;
    size_t n;
    if (fileio_open_regular(path, "a file to read", &fd, &n, e)) return -1;
    if (n > max_bytes) {
        close(fd);
        return err_at(e, path, 0, "file is %zu bytes, more than the limit of %zu", n, max_bytes);
    }
    char *b = malloc(n + 1);
    if (!b) { close(fd); return err_at(e, path, 0, "out of memory for %zu bytes", n); }
    size_t got = 0;
    while (got < n) {
        ssize_t r = read(fd, b + got, n - got);
        if (r < 0 && errno == EINTR) continue;
        if (r <= 0) break;
        got += (size_t)r;
    }
    close(fd);
    if (got != n) { free(b); return err_at(e, path, 0, "read failed after %zu of %zu bytes", got, n); }
    b[n] = 0;
    *buf = b;
    *len = n;
    return 0;
}

uint64_t fileio_hash_bytes(uint64_t h, const void *data, size_t len)
{
    const unsigned char *p = data;
    const uint64_t prime = 0x100000001b3ull;
    size_t k = 0;
    for (; k + 8 <= len; k += 8) {
        uint64_t w;
        memcpy(&w, p + k, 8);
        h = (h ^ w) * prime;
        h ^= h >> 29;
    }
    for (; k < len; k++) h = (h ^ p[k]) * prime;
    return h;
}

int fileio_hash_file(const char *path, uint64_t *h, struct err *e)
{
    int fd;
    size_t size;
    if (fileio_open_regular(path, "a file to hash", &fd, &size, e)) return -1;
    enum { BLOCK = 1 << 20 };
    unsigned char *b = malloc(BLOCK);
    if (!b) { close(fd); return err_at(e, path, 0, "out of memory"); }
    uint64_t v = fileio_hash_bytes(FILEIO_HASH_SEED, &size, sizeof size);
    size_t got = 0, fill = 0;
    int rc = 0;
    for (;;) {
        ssize_t r = read(fd, b + fill, BLOCK - fill);
        if (r < 0 && errno == EINTR) continue;
        if (r < 0) { rc = err_at(e, path, 0, "read failed: %s", strerror(errno)); break; }
        fill += (size_t)r;
        got += (size_t)r;
        /* whole blocks only (a multiple of 8), so words line up however read() splits */
        if (fill == BLOCK || r == 0) { v = fileio_hash_bytes(v, b, fill); fill = 0; }
        if (r == 0) break;
    }
    free(b);
    close(fd);
    if (!rc && got != size) rc = err_at(e, path, 0, "changed while read (%zu of %zu bytes)", got, size);
    if (!rc) *h = v;
    return rc;
}

int fileio_remove_tree(const char *path, struct err *e)
{
    DIR *d = opendir(path);
    if (!d) {
        if (errno == ENOENT) return 0;
        if (errno == ENOTDIR) return unlink(path) ? err_at(e, path, 0, "cannot remove: %s", strerror(errno)) : 0;
        return err_at(e, path, 0, "cannot open folder: %s", strerror(errno));
    }
    struct dirent *de;
    int rc = 0;
    while (!rc && (de = readdir(d))) {
        if (!strcmp(de->d_name, ".") || !strcmp(de->d_name, "..")) continue;
        char sub[4096];
        struct stat st;
        int n = snprintf(sub, sizeof sub, "%s/%s", path, de->d_name);
        if (n < 0 || (size_t)n >= sizeof sub) { rc = err_at(e, path, 0, "path too long below this folder"); break; }
        if (lstat(sub, &st)) continue;
        if (S_ISDIR(st.st_mode)) rc = fileio_remove_tree(sub, e);
        else if (unlink(sub)) rc = err_at(e, sub, 0, "cannot remove: %s", strerror(errno));
    }
    closedir(d);
    if (!rc && rmdir(path)) rc = err_at(e, path, 0, "cannot remove folder: %s", strerror(errno));
    return rc;
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
