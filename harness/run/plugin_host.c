/* plugin_host.c: find, load, configure and check descriptor methods. */
#include "harness/run/plugin_host.h"

#include <dirent.h>
#include <dlfcn.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/run/external.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "harness/base/progress.h"
#include "harness/base/spell.h"

#define PLUGIN_GUARD 8   /* guard words after each output buffer */

/* The two platform helpers.  plugin_dl_open loads a shared object with every
 * symbol resolved now and nothing exported to later loads; plugin_dl_sym
 * finds one symbol.  Both return NULL and put the dlerror() text, prefixed
 * with the path, into e. */
static void *plugin_dl_open(const char *path, struct err *e)
{
    void *h = dlopen(path, RTLD_NOW | RTLD_LOCAL);
    if (!h) err_set(e, "%s: cannot load plugin: %s", path, dlerror());
    return h;
}

static void *plugin_dl_sym(void *h, const char *path, const char *sym, struct err *e)
{
    dlerror();
    void *f = dlsym(h, sym);
    const char *why = dlerror();
    if (why || !f)
        err_set(e, "%s: no entry function '%s', expected a plugin built against revisit_plugin.h (%s)",
                path, sym, why ? why : "symbol is NULL");
    return why ? NULL : f;
}

void plugin_unload(void *so)
{
    if (so) dlclose(so);
}

static int plugin_check_settings(const char *path, const struct rv_method *m, struct err *e)
{
    if (m->n_settings > PLUGIN_MAX_SETTINGS || (m->n_settings && !m->settings))
        return err_set(e, "%s: method '%s' declares %u settings, expected at most %d",
                       path, m->name, m->n_settings, PLUGIN_MAX_SETTINGS);
    for (uint32_t k = 0; k < m->n_settings; k++) {
        const struct rv_setting *s = &m->settings[k];
        if (!s->key || !*s->key || s->type > RV_SET_CHOICE || !(s->min <= s->def && s->def <= s->max) ||
            (s->type == RV_SET_CHOICE && !s->choices))
            return err_set(e, "%s: method '%s' has a bad setting %u (key, type, default within range)",
                           path, m->name, k);
    }
    return 0;
}

int plugin_load_table(const char *path, void **so, const struct rv_method **m, struct err *e)
{
    *so = NULL;
    *m = NULL;
    void *h = plugin_dl_open(path, e);
    if (!h) return -1;
    rv_entry_fn entry;
    void *sym = plugin_dl_sym(h, path, RV_ENTRY, e);
    if (!sym) goto fail;
    memcpy(&entry, &sym, sizeof entry);
    const struct rv_method *t = entry();
    if (!t) { err_set(e, "%s: %s() returned NULL, expected a method table", path, RV_ENTRY); goto fail; }
    if (t->abi_version != RV_ABI_VERSION) {
        err_set(e, "%s: plugin ABI version %u, expected %u (rebuild it against this revisit_plugin.h)",
                path, t->abi_version, RV_ABI_VERSION);
        goto fail;
    }
    if (t->struct_size < offsetof(struct rv_method, distance_fn)) {
        err_set(e, "%s: method table of %u bytes, expected at least %zu", path, t->struct_size,
                offsetof(struct rv_method, distance_fn));
        goto fail;
    }
    if (!t->name || !*t->name || strlen(t->name) >= 64 || strpbrk(t->name, " :/\t") || !t->create ||
        !t->describe || !t->destroy || t->distance > RV_DIST_CUSTOM) {
        err_set(e, "%s: method table lacks a name, create, describe or destroy, or has an unknown distance", path);
        goto fail;
    }
    if (t->distance == RV_DIST_CUSTOM &&
        (t->struct_size < offsetof(struct rv_method, reset) || !t->distance_fn)) {
        err_set(e, "%s: method '%s' declares a custom distance but gives no distance function", path, t->name);
        goto fail;
    }
    if (plugin_check_settings(path, t, e)) goto fail;
    *so = h;
    *m = t;
    return 0;
fail:
    dlclose(h);
    return -1;
}

/* The folder of the running program, resolved through /proc/self/exe, into
 * out; "" when it cannot be read (then only the other folders are searched). */
static void plugin_exe_dir(char *out, size_t n)
{
    ssize_t len = readlink("/proc/self/exe", out, n - 1);
    if (len <= 0 || (size_t)len >= n - 1) len = 0;
    out[len] = 0;
    char *slash = strrchr(out, '/');
    if (slash) *slash = 0;
    else out[0] = 0;
}

/* Append dir to the ':'-joined list out (skipping empty and repeated
 * folders); 0, or -1 when out is too small. */
static int plugin_order_add(char *out, size_t n, const char *dir)
{
    size_t len = strlen(dir), used = strlen(out);
    if (!len) return 0;
    for (const char *p = out; *p; p += strcspn(p, ":"), p += *p == ':') {
        if (strcspn(p, ":") == len && !strncmp(p, dir, len)) return 0;
    }
    int w = snprintf(out + used, n - used, "%s%s", used ? ":" : "", dir);
    return w < 0 || (size_t)w >= n - used ? -1 : 0;
}

int plugin_search_order(const char *search_path, char *out, size_t n, struct err *e)
{
    const char *env = getenv("REVISIT_PLUGIN_PATH");
    char exe[4096], beside[4096 + 16], lib[4096 + 32];
    plugin_exe_dir(exe, sizeof exe);
    beside[0] = lib[0] = 0;
    if (exe[0]) {   /* both buffers are sized for exe plus the suffix: cannot be cut */
        if (snprintf(beside, sizeof beside, "%s/plugins", exe) < 0) beside[0] = 0;
        char *up = strrchr(exe, '/');   /* <exe dir>/../lib/revisit/plugins, spelt out */
        if (up && snprintf(lib, sizeof lib, "%.*s/lib/revisit/plugins", (int)(up - exe), exe) < 0) lib[0] = 0;
    }
    char given[8192];
    int w = snprintf(given, sizeof given, "%s:%s", search_path ? search_path : "", env ? env : "");
    if (w < 0 || (size_t)w >= sizeof given) return err_set(e, "plugin search path too long");
    out[0] = 0;
    int bad = 0;
    for (char *save = NULL, *dir = strtok_r(given, ":", &save); dir; dir = strtok_r(NULL, ":", &save))
        bad |= plugin_order_add(out, n, dir);
    bad |= plugin_order_add(out, n, beside) | plugin_order_add(out, n, lib);
    bad |= plugin_order_add(out, n, RV_PLUGIN_DIR);
    return bad ? err_set(e, "plugin search path too long, expected at most %zu bytes", n - 1) : 0;
}

/* The names found on the search path as "'a' or 'b'" near name, into out. */
static void plugin_suggest(const char *name, const char *search_path, char *out, size_t n)
{
    struct plugin_info *list;
    size_t count;
    struct err le;
    out[0] = 0;
    if (plugin_list(search_path, &list, &count, &le)) return;
    const char **names = malloc((count + 1) * sizeof *names);
    if (names) {
        for (size_t k = 0; k < count; k++) names[k] = list[k].name;
        spell_suggest(name, names, count, out, n);
    }
    free(names);
    free(list);
}

int plugin_find(const char *name, const char *search_path, char *out, size_t n, struct err *e)
{
    char order[8192];
    if (plugin_search_order(search_path, order, sizeof order, e)) return -1;
    char walk[8192];
    memcpy(walk, order, sizeof walk);
    for (char *save = NULL, *dir = strtok_r(walk, ":", &save); dir; dir = strtok_r(NULL, ":", &save)) {
        int w = snprintf(out, n, "%s/%s.so", dir, name);
        if (w > 0 && (size_t)w < n && access(out, R_OK) == 0) return 0;
    }
    char near[512];
    plugin_suggest(name, search_path, near, sizeof near);
    return err_set(e, "method '%s' not found: no %s.so in the plugin search path '%s'%s%s%s "
                   "(see --plugin-path and REVISIT_PLUGIN_PATH; 'revisit methods' lists what is found)",
                   name, name, order, near[0] ? "; did you mean " : "", near, near[0] ? "?" : "");
}

static int plugin_info_cmp(const void *a, const void *b)
{
    return strcmp(((const struct plugin_info *)a)->name, ((const struct plugin_info *)b)->name);
}

static int plugin_list_add(struct plugin_info **out, size_t *n, size_t *cap, const char *dir,
                           const char *file)
{
    size_t len = strlen(file);
    if (len < 4 || strcmp(file + len - 3, ".so") || len - 3 >= 64) return 0;
    for (size_t k = 0; k < *n; k++)
        if (strlen((*out)[k].name) == len - 3 && !strncmp((*out)[k].name, file, len - 3)) return 0;
    if (*n == *cap) {
        size_t c = *cap ? 2 * *cap : 16;
        struct plugin_info *g = realloc(*out, c * sizeof *g);
        if (!g) return -1;
        *out = g;
        *cap = c;
    }
    struct plugin_info *p = &(*out)[(*n)++];
    memcpy(p->name, file, len - 3);
    p->name[len - 3] = 0;
    snprintf(p->path, sizeof p->path, "%s/%s", dir, file);
    return 0;
}

int plugin_list(const char *search_path, struct plugin_info **out, size_t *n, struct err *e)
{
    char order[8192];
    size_t cap = 0;
    *out = NULL;
    *n = 0;
    if (plugin_search_order(search_path, order, sizeof order, e)) return -1;
    for (char *save = NULL, *dir = strtok_r(order, ":", &save); dir; dir = strtok_r(NULL, ":", &save)) {
        DIR *d = opendir(dir);
        if (!d) continue;
        struct dirent *de;
        int bad = 0;
        while (!bad && (de = readdir(d))) bad = plugin_list_add(out, n, &cap, dir, de->d_name);
        closedir(d);
        if (bad) {
            free(*out);
            *out = NULL;
            *n = 0;
            return err_set(e, "out of memory listing plugins");
        }
    }
    if (*n) qsort(*out, *n, sizeof **out, plugin_info_cmp);
    return 0;
}

void plugin_setting_text(const struct rv_setting *s, double v, char *out, size_t n)
{
    if (s->type == RV_SET_BOOL) {
        snprintf(out, n, "%s", v != 0 ? "true" : "false");
    } else if (s->type == RV_SET_CHOICE) {
        const char *c = s->choices;
        for (int k = 0; k < (int)v && c; k++) {
            c = strchr(c, '|');
            if (c) c++;
        }
        size_t len = c ? strcspn(c, "|") : 0;
        snprintf(out, n, "%.*s", (int)len, c ? c : "");
    } else {
        snprintf(out, n, "%.10g", v);
    }
}

/* Index of word in a '|'-separated list, or -1. */
static int plugin_choice(const char *choices, const char *word)
{
    int k = 0;
    for (const char *c = choices; c; k++) {
        size_t len = strcspn(c, "|");
        if (len == strlen(word) && !strncmp(c, word, len)) return k;
        c = strchr(c, '|');
        if (c) c++;
    }
    return -1;
}

static int plugin_parse_value(const struct rv_method *m, const struct rv_setting *s, const char *val,
                              double *out, struct err *e)
{
    static const char *const bools[] = {"false", "true", "0", "1", "no", "yes", NULL};
    if (s->type == RV_SET_BOOL) {
        for (int k = 0; bools[k]; k++)
            if (!strcmp(bools[k], val)) return *out = k % 2, 0;
        return err_set(e, "method '%s': setting '%s' expects true or false, got '%s'", m->name, s->key, val);
    }
    if (s->type == RV_SET_CHOICE) {
        int k = plugin_choice(s->choices, val);
        if (k < 0)
            return err_set(e, "method '%s': setting '%s' expects one of %s, got '%s'", m->name, s->key,
                           s->choices, val);
        return *out = k, 0;
    }
    double v;
    if (opt_to_double(val, &v) || !isfinite(v) || (s->type == RV_SET_INT && v != floor(v)))
        return err_set(e, "method '%s': setting '%s' expects a %s number, got '%s'", m->name, s->key,
                       s->type == RV_SET_INT ? "whole" : "real", val);
    if (v < s->min || v > s->max)
        return err_set(e, "method '%s': setting '%s' is %s, expected a value from %g to %g", m->name,
                       s->key, val, s->min, s->max);
    *out = v;
    return 0;
}

/* Apply "key=value,key=value" to values (pre-filled with defaults). */
static int plugin_apply_settings(const struct rv_method *m, const char *text, double *values,
                                 struct err *e)
{
    char buf[2048];
    unsigned char seen[PLUGIN_MAX_SETTINGS] = {0};
    if (strlen(text) >= sizeof buf) return err_set(e, "method '%s': settings too long", m->name);
    strcpy(buf, text);
    for (char *save = NULL, *kv = strtok_r(buf, ",", &save); kv; kv = strtok_r(NULL, ",", &save)) {
        char *eq = strchr(kv, '=');
        if (!eq) return err_set(e, "method '%s': setting '%s' lacks '=value'", m->name, kv);
        *eq = 0;
        uint32_t k = 0;
        while (k < m->n_settings && strcmp(m->settings[k].key, kv)) k++;
        if (k == m->n_settings) {
            char keys[512] = "";
            for (uint32_t j = 0; j < m->n_settings; j++)
                snprintf(keys + strlen(keys), sizeof keys - strlen(keys), "%s%s", j ? ", " : "",
                         m->settings[j].key);
            return err_set(e, "method '%s' has no setting '%s', expected one of: %s", m->name, kv,
                           m->n_settings ? keys : "(none)");
        }
        if (k < PLUGIN_MAX_SETTINGS && seen[k]++)
            return err_set(e, "method '%s': setting '%s' is given twice, expected each at most once", m->name, kv);
        if (plugin_parse_value(m, &m->settings[k], eq + 1, &values[k], e)) return -1;
    }
    return 0;
}

/* The label names the variant in results and in the cache key: refused,
 * never cut, when it does not fit. */
static int plugin_make_label(struct plugin *p, struct err *e)
{
    int n = snprintf(p->label, sizeof p->label, "%s", p->name);
    size_t used = n < 0 ? sizeof p->label : (size_t)n;
    for (uint32_t k = 0; k < p->m->n_settings && used < sizeof p->label; k++) {
        char v[128];
        plugin_setting_text(&p->m->settings[k], p->values[k], v, sizeof v);
        n = snprintf(p->label + used, sizeof p->label - used, "%c%s=%s", k ? ',' : ':', p->m->settings[k].key, v);
        used = n < 0 ? sizeof p->label : used + (size_t)n;
    }
    if (used >= sizeof p->label)
        return err_set(e, "method '%s': its settings spelled out take more than %zu bytes, expected fewer or "
                       "shorter settings", p->name, sizeof p->label - 1);
    return 0;
}

static int plugin_open_so(struct plugin *p, const char *settings, struct err *e)
{
    if (plugin_load_table(p->path, &p->so, &p->m, e)) return -1;
    const struct rv_method *m = p->m;
    snprintf(p->name, sizeof p->name, "%s", m->name);
    snprintf(p->version, sizeof p->version, "%s", m->version ? m->version : "");
    for (uint32_t k = 0; k < m->n_settings; k++) p->values[k] = m->settings[k].def;
    if (settings && plugin_apply_settings(m, settings, p->values, e)) return -1;
    char msg[256] = "";
    int rc = m->create(p->values, &p->inst, &p->dim, &p->key_dim, msg, sizeof msg);
    msg[sizeof msg - 1] = 0;
    if (rc != RV_OK)
        return err_set(e, "method '%s': cannot create an instance: %s", m->name, msg[0] ? msg : "no reason given");
    if (p->dim == 0 || p->dim > PLUGIN_MAX_DIM || p->key_dim > PLUGIN_MAX_DIM)
        return err_set(e, "method '%s': declared dimension %u (key %u), expected 1 to %u", m->name, p->dim,
                       p->key_dim, PLUGIN_MAX_DIM);
    if (m->distance != RV_DIST_CUSTOM) p->key_dim = 0;  /* keys only serve a custom distance */
    p->distance = m->distance;
    p->flags = m->flags;
    return plugin_make_label(p, e);
}

/* External program: settings become "key=value" arguments. */
static int plugin_open_external(struct plugin *p, const char *settings, const struct plugin_limits *lim,
                                struct err *e)
{
    char buf[2048] = "";
    const char *args[64];
    int nargs = 0;
    if (settings && err_cut(snprintf(buf, sizeof buf, "%s", settings), sizeof buf))
        return err_set(e, "method '%s': settings longer than %zu bytes, expected fewer", p->path, sizeof buf - 1);
    char *save = NULL, *kv = strtok_r(buf, ",", &save);
    for (; kv && nargs < 64; kv = strtok_r(NULL, ",", &save)) args[nargs++] = kv;
    if (kv) return err_set(e, "method '%s': more than 64 settings, expected at most 64", p->path);
    double scan_s = lim && lim->time_s > 0 ? lim->time_s : EXTERNAL_SCAN_S;
    struct external_limits xl = {scan_s > EXTERNAL_HELLO_S ? scan_s : EXTERNAL_HELLO_S, scan_s,
                                 lim ? lim->mem_bytes : 0};
    if (external_start_limits(&p->ext, p->path, args, nargs, &xl, e)) return -1;
    snprintf(p->name, sizeof p->name, "%s", p->ext->name);
    snprintf(p->version, sizeof p->version, "external");
    p->dim = p->ext->dim;
    p->key_dim = 0;
    p->distance = p->ext->distance;
    p->flags = 0;
    if (err_cut(snprintf(p->label, sizeof p->label, "%s%s%s", p->name, settings && *settings ? ":" : "",
                         settings ? settings : ""), sizeof p->label))
        return err_set(e, "method '%s': its label with the settings takes more than %zu bytes, expected fewer",
                       p->name, sizeof p->label - 1);
    return 0;
}

/* Where the name or path of spec ends: a NAME ends at the first ':'; a
 * PATH at the first ':' before which an existing file is named (setting
 * values may hold '/' and ':'), else at the first ':'. */
static size_t plugin_spec_head(const char *spec)
{
    const char *first = strchr(spec, ':');
    if (!strchr(spec, '/') || !first) return first ? (size_t)(first - spec) : strlen(spec);
    for (const char *c = first; c; c = strchr(c + 1, ':')) {
        char head[4096];
        struct stat st;
        size_t hl = (size_t)(c - spec);
        if (hl >= sizeof head) break;
        memcpy(head, spec, hl);
        head[hl] = 0;
        if (!stat(head, &st) && S_ISREG(st.st_mode)) return hl;
    }
    return (size_t)(first - spec);
}

int plugin_file_digest(const char *spec, const char *search_path, uint64_t *digest, struct err *e)
{
    char head[4096], path[4096];
    size_t hl = plugin_spec_head(spec);
    if (hl == 0 || hl >= sizeof head) return err_set(e, "method '%s': expected NAME[:key=value,...]", spec);
    memcpy(head, spec, hl);
    head[hl] = 0;
    if (!memchr(head, '/', hl)) {
        if (plugin_find(head, search_path, path, sizeof path, e)) return -1;
    } else {
        snprintf(path, sizeof path, "%s", head);
    }
    return fileio_hash_file(path, digest, e) ? err_wrap(e, "method '%s'", head) : 0;
}

int plugin_open(struct plugin *p, const char *spec, const char *search_path, struct err *e)
{
    return plugin_open_limits(p, spec, search_path, NULL, e);
}

int plugin_open_limits(struct plugin *p, const char *spec, const char *search_path,
                       const struct plugin_limits *lim, struct err *e)
{
    memset(p, 0, sizeof *p);
    p->time_limit_s = lim && lim->time_s > 0 ? lim->time_s : PLUGIN_TIME_LIMIT_S;
    char head[4096];
    size_t hl = plugin_spec_head(spec);
    const char *slash = memchr(spec, '/', hl);
    const char *colon = spec[hl] == ':' ? spec + hl : NULL;
    if (hl == 0 || hl >= sizeof head) return err_set(e, "method '%s': expected NAME[:key=value,...]", spec);
    memcpy(head, spec, hl);
    head[hl] = 0;
    const char *settings = colon ? colon + 1 : NULL;
    int rc;
    if (!slash) {
        if (plugin_find(head, search_path, p->path, sizeof p->path, e)) return -1;
        p->guard = plugin_guard_enter(head, p->path);
        rc = plugin_open_so(p, settings, e);
    } else {
        snprintf(p->path, sizeof p->path, "%s", head);
        struct stat st;
        if (stat(head, &st)) return err_set(e, "method '%s': no such file", head);
        int so = hl > 3 && !strcmp(head + hl - 3, ".so");
        if (so) p->guard = plugin_guard_enter(head, p->path);
        if (so) rc = plugin_open_so(p, settings, e);
        else if (access(head, X_OK) == 0) rc = plugin_open_external(p, settings, lim, e);
        else return err_set(e, "method '%s': not a .so plugin and not an executable program", head);
    }
    if (!rc && fileio_hash_file(p->path, &p->digest, e)) rc = err_wrap(e, "method '%s'", p->name);
    if (rc) plugin_close(p);
    if (!rc && p->guard) {
        /* the table's name from now on */
        plugin_guard_leave(p->guard);
        p->guard = plugin_guard_enter(p->name, p->path);
    }
    return rc;
}

static const uint32_t plugin_canary = 0x7fa5c3e1u;  /* a NaN bit pattern no arithmetic writes */

static void plugin_guard_fill(float *g)
{
    for (int k = 0; k < PLUGIN_GUARD; k++) memcpy(&g[k], &plugin_canary, sizeof plugin_canary);
}

static int plugin_guard_ok(const float *g)
{
    for (int k = 0; k < PLUGIN_GUARD; k++)
        if (memcmp(&g[k], &plugin_canary, sizeof plugin_canary)) return 0;
    return 1;
}

/* First non-finite entry, or n. */
static size_t plugin_first_bad(const float *v, size_t n)
{
    for (size_t k = 0; k < n; k++)
        if (!isfinite(v[k])) return k;
    return n;
}

/* Check a described buffer (with guards after desc and key); 0 or -1. */
static int plugin_check_output(const struct plugin *p, const struct rv_scan *s, const float *d,
                               const float *k, struct err *e)
{
    if (!plugin_guard_ok(d + p->dim) || (p->key_dim && !plugin_guard_ok(k + p->key_dim)))
        return err_set(e, "method '%s' on scan %u: wrote past its declared dimension %u (key %u), "
                       "expected exactly that many floats", p->name, s->index, p->dim, p->key_dim);
    size_t bad = plugin_first_bad(d, p->dim);
    if (bad < p->dim)
        return err_set(e, "method '%s' on scan %u: descriptor entry %zu is %g, expected a finite number",
                       p->name, s->index, bad, (double)d[bad]);
    bad = plugin_first_bad(k, p->key_dim);
    if (bad < p->key_dim)
        return err_set(e, "method '%s' on scan %u: key entry %zu is %g, expected a finite number",
                       p->name, s->index, bad, (double)k[bad]);
    return 0;
}

int plugin_describe(struct plugin *p, const struct rv_scan *s, float *desc, float *key, struct err *e)
{
    if (p->ext) {
        if (external_describe(p->ext, s, desc, e)) return -1;
        size_t bad = plugin_first_bad(desc, p->dim);
        if (bad < p->dim)
            return err_set(e, "method '%s' on scan %u: descriptor entry %zu is %g, expected a finite number",
                           p->name, s->index, bad, (double)desc[bad]);
        return 0;
    }
    size_t nd = (size_t)p->dim + PLUGIN_GUARD, nk = (size_t)p->key_dim + PLUGIN_GUARD;
    float *buf = malloc((nd + nk) * sizeof *buf);
    if (!buf) return err_set(e, "method '%s' on scan %u: out of memory", p->name, s->index);
    float *d = buf, *k = buf + nd;
    for (size_t j = 0; j < nd + nk; j++) d[j] = 0;
    plugin_guard_fill(d + p->dim);
    plugin_guard_fill(k + p->key_dim);
    char msg[256] = "";
    double t0 = progress_now();
    int rc = p->m->describe(p->inst, s, d, p->key_dim ? k : NULL, msg, sizeof msg);
    double took = progress_now() - t0;
    msg[sizeof msg - 1] = 0;
    int fail = -1;
    if (rc != RV_OK)
        err_set(e, "method '%s' on scan %u: describe failed (status %d): %s", p->name, s->index, rc,
                msg[0] ? msg : "no reason given");
    else if (p->time_limit_s > 0 && took > p->time_limit_s)
        err_set(e, "method '%s' on scan %u: took %.3f s, expected at most %g s per scan", p->name, s->index,
                took, p->time_limit_s);
    else if (!plugin_check_output(p, s, d, k, e))
        fail = 0;
    if (!fail) {
        memcpy(desc, d, p->dim * sizeof *d);
        if (p->key_dim && key) memcpy(key, k, p->key_dim * sizeof *k);
    }
    free(buf);
    return fail;
}

double plugin_distance(const struct plugin *p, const float *a, const float *b, int32_t *aux)
{
    double d = p->m->distance_fn(p->inst, a, b, aux);
    return isfinite(d) && d >= 0 ? d : INFINITY;
}

int plugin_distances(const struct plugin *p, const float *a, const float *const *b, size_t n, double *out,
                     struct err *e)
{
    const struct rv_method *m = p->m;
    if (m->struct_size < offsetof(struct rv_method, distance_batch) + sizeof m->distance_batch ||
        !m->distance_batch) {
        for (size_t t = 0; t < n; t++) out[t] = m->distance_fn(p->inst, a, b[t], NULL);
        return 0;
    }
    char msg[256] = "";
    int rc = m->distance_batch(p->inst, a, b, n, out, NULL, msg, sizeof msg);
    msg[sizeof msg - 1] = 0;
    if (rc != RV_OK)
        return err_set(e, "method '%s': distance_batch failed (status %d): %s", p->name, rc,
                       msg[0] ? msg : "no reason given");
    return 0;
}

void plugin_reset(struct plugin *p)
{
    if (p->m && (p->flags & RV_FLAG_SEQUENTIAL) && p->m->struct_size >= sizeof *p->m && p->m->reset)
        p->m->reset(p->inst);
}

void plugin_close(struct plugin *p)
{
    if (p->m && p->inst) p->m->destroy(p->inst);
    p->inst = NULL;
    p->m = NULL;
    plugin_unload(p->so);
    p->so = NULL;
    external_stop(p->ext);
    p->ext = NULL;
    plugin_guard_leave(p->guard);
    p->guard = 0;
}
