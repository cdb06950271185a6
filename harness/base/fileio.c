/* fileio.c: atomic writes and folders, bounded whole-file reads. */
#define _GNU_SOURCE   /* syncfs */
#include "harness/base/fileio.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define AFILE_BUF (1 << 18)

int afile_open(struct afile *a, const char *path, struct err *e)
{
    memset(a, 0, sizeof *a);
    if (strlen(path) >= sizeof a->path) return err_at(e, path, 0, "path too long");
    strcpy(a->path, path);
    static unsigned counter;  /* only makes names unique; not part of any result */
    unsigned k = __atomic_add_fetch(&counter, 1, __ATOMIC_RELAXED);
    /* Inside a staged folder nobody sees the file before the folder's
     * commit: write it under its own name (no rename, no sync). */
    if (strstr(path, "/" FILEIO_STAGED)) snprintf(a->tmp, sizeof a->tmp, "%s", path);
    else snprintf(a->tmp, sizeof a->tmp, "%s.tmp.%ld.%u", path, (long)getpid(), k);
    int fd = open(a->tmp, O_WRONLY | O_CREAT | O_EXCL, 0644);
    if (fd < 0) return err_at(e, path, 0, "cannot create file: %s", strerror(errno));
    a->f = fdopen(fd, "wb");
    if (!a->f) {
        close(fd);
        unlink(a->tmp);
        return err_at(e, path, 0, "cannot open file: %s", strerror(errno));
    }
    a->buf = malloc(AFILE_BUF);   /* few large writes (a scan is megabytes); without it, stdio's own */
    if (a->buf) setvbuf(a->f, a->buf, _IOFBF, AFILE_BUF);
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
    int staged = strstr(a->path, "/" FILEIO_STAGED) != NULL;   /* synced by the folder's commit */
    if (!bad && !staged && fsync(fileno(a->f))) { bad = 1; saved = errno; }
    /* a staged file starts on its way to the disk now, so the folder's one
     * sync finds little left to write (a hint: its failure changes nothing) */
#ifdef SYNC_FILE_RANGE_WRITE
    if (!bad && staged) (void)sync_file_range(fileno(a->f), 0, 0, SYNC_FILE_RANGE_WRITE);
#endif
    if (fclose(a->f) && !bad) { bad = 1; saved = errno; }
    a->f = NULL;
    free(a->buf);
    a->buf = NULL;
    if (!bad && !staged && rename(a->tmp, a->path)) { bad = 1; saved = errno; }
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
    free(a->buf);
    a->buf = NULL;
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

int fileio_join(char *out, size_t n, const char *dir, const char *name)
{
    int len = name[0] == '/' || !dir || !dir[0] ? snprintf(out, n, "%s", name) : snprintf(out, n, "%s/%s", dir, name);
    if (!err_cut(len, n)) return 0;
    if (n) out[0] = 0;
    return -1;
}

void fileio_dirname(char *out, size_t n, const char *path)
{
    const char *s = strrchr(path, '/');
    if (!s) snprintf(out, n, ".");
    else if (s == path) snprintf(out, n, "/");
    else snprintf(out, n, "%.*s", (int)(s - path), path);
}

/* Remove PARENT/.staged-BASE-PID-K folders whose process has ended. */
static void fileio_stage_sweep(const char *parent, const char *base)
{
    DIR *d = opendir(parent);
    if (!d) return;
    char prefix[600];
    int np = snprintf(prefix, sizeof prefix, FILEIO_STAGED "%s-", base);
    for (struct dirent *de; np > 0 && (size_t)np < sizeof prefix && (de = readdir(d));) {
        long pid;
        unsigned k;
        char end;
        if (strncmp(de->d_name, prefix, (size_t)np) ||
            sscanf(de->d_name + np, "%ld-%u%c", &pid, &k, &end) != 2 || pid <= 0)
            continue;
        if (kill((pid_t)pid, 0) == 0 || errno != ESRCH) continue;   /* alive, or not ours to judge */
        char old[4400];
        snprintf(old, sizeof old, "%s/%s", parent, de->d_name);
        fileio_remove_tree(old, NULL);
    }
    closedir(d);
}

int fileio_stage_open(struct fileio_stage *s, const char *path, struct err *e)
{
    memset(s, 0, sizeof *s);
    size_t n = strlen(path);
    while (n > 1 && path[n - 1] == '/') n--;
    if (n == 0 || n >= sizeof s->path - 64) return err_at(e, path, 0, "path empty or too long");
    memcpy(s->path, path, n);
    char parent[4096];
    fileio_dirname(parent, sizeof parent, s->path);
    const char *slash = strrchr(s->path, '/'), *base = slash ? slash + 1 : s->path;
    if (!*base || !strcmp(base, ".") || !strcmp(base, ".."))
        return err_at(e, path, 0, "expected a folder name, not '%s'", base);
    if (fileio_mkdirs(parent, e)) return -1;
    fileio_stage_sweep(parent, base);
    static unsigned counter;  /* only makes names unique; not part of any result */
    unsigned k = __atomic_add_fetch(&counter, 1, __ATOMIC_RELAXED);
    if (err_cut(snprintf(s->tmp, sizeof s->tmp, "%s/" FILEIO_STAGED "%s-%ld-%u", parent, base, (long)getpid(), k),
                sizeof s->tmp)) {
        s->tmp[0] = 0;
        return err_at(e, path, 0, "path too long for a folder beside it");
    }
    if (mkdir(s->tmp, 0755)) {
        int err = errno;
        s->tmp[0] = 0;
        return err_at(e, path, 0, "cannot create a folder beside it: %s", strerror(err));
    }
    return 0;
}

/* fsync of a folder, so a rename in it is on disk. */
static int fileio_sync_dir(const char *dir)
{
    int fd = open(dir, O_RDONLY | O_DIRECTORY);
    if (fd < 0) return -1;
    int rc = fsync(fd);
    close(fd);
    return rc;
}

/* The staged entries into an existing folder, LAST at the end (see fileio.h). */
static int fileio_stage_merge(struct fileio_stage *s, const char *last)
{
    char names[64][256], from[4400], to[4400], old[4400];
    int n = 0;
    DIR *d = opendir(s->tmp);
    if (!d) return -1;
    for (struct dirent *de; (de = readdir(d)) && n < 64;)
        if (strcmp(de->d_name, ".") && strcmp(de->d_name, "..") && strcmp(de->d_name, last) &&
            strlen(de->d_name) < sizeof names[0])
            strcpy(names[n++], de->d_name);
    closedir(d);
    if (err_cut(snprintf(to, sizeof to, "%s/%s", s->path, last), sizeof to)) { errno = ENAMETOOLONG; return -1; }
    if (unlink(to) && errno != ENOENT) return -1;
    for (int k = 0; k < n; k++) {
        if (err_cut(snprintf(from, sizeof from, "%s/%s", s->tmp, names[k]), sizeof from) ||
            err_cut(snprintf(to, sizeof to, "%s/%s", s->path, names[k]), sizeof to) ||
            err_cut(snprintf(old, sizeof old, "%s/.old-%s", s->tmp, names[k]), sizeof old)) {
            errno = ENAMETOOLONG;
            return -1;
        }
        if ((rename(to, old) && errno != ENOENT) || rename(from, to)) return -1;
    }
    snprintf(from, sizeof from, "%s/%s", s->tmp, last);
    snprintf(to, sizeof to, "%s/%s", s->path, last);
    return rename(from, to);
}

int fileio_stage_commit(struct fileio_stage *s, const char *last, struct err *e)
{
    int fd = open(s->tmp, O_RDONLY | O_DIRECTORY), err = 0;
    if (fd < 0 || syncfs(fd)) err = errno;
    if (fd >= 0) close(fd);
    if (!err && rename(s->tmp, s->path) && errno != ENOTEMPTY && errno != EEXIST) err = errno;
    else if (!err && access(s->tmp, F_OK) == 0 && fileio_stage_merge(s, last)) err = errno;
    char parent[4096];
    fileio_dirname(parent, sizeof parent, s->path);
    if (!err && (fileio_sync_dir(s->path) || fileio_sync_dir(parent))) err = errno;
    fileio_stage_abort(s);
    return err ? err_at(e, s->path, 0, "cannot put the folder in place: %s", strerror(err)) : 0;
}

void fileio_stage_abort(struct fileio_stage *s)
{
    if (s->tmp[0]) fileio_remove_tree(s->tmp, NULL);
    s->tmp[0] = 0;
}
