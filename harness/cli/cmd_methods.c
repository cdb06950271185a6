/* cmd_methods.c: `revisit methods [NAME]`: the methods found and their settings. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/cli/cmd.h"
#include "harness/base/opt.h"
#include "harness/run/plugin_host.h"

static const char about[] =
    "List every descriptor method on the plugin search path with its settings and\n"
    "defaults, then the folders searched, in order: --plugin-path, then\n"
    "REVISIT_PLUGIN_PATH, then plugins/ beside the revisit program, then\n"
    "lib/revisit/plugins beside its bin/ folder, then the install folder.  With\n"
    "NAME, describe that one: distance, flags, each setting's type, default,\n"
    "range and meaning.  Use a setting as NAME:key=value.  External programs\n"
    "are given by path to 'revisit eval --method'.\n\n";

static const char *const methods_types[] = {"whole number", "real number", "true/false", "one of"};
static const char *const methods_dists[] = {"L2", "cosine (1 - cos)", "custom (the method's own)"};

static void methods_brief(const char *name, const struct rv_method *m)
{
    printf("%-16s %s  %s\n", name, m->version ? m->version : "", m->summary ? m->summary : "");
    printf("%-16s", "");
    for (uint32_t k = 0; k < m->n_settings; k++) {
        char v[128];
        plugin_setting_text(&m->settings[k], m->settings[k].def, v, sizeof v);
        printf(" %s=%s", m->settings[k].key, v);
    }
    printf("%s\n", m->n_settings ? "" : " (no settings)");
}

static void methods_full(const char *path, const struct rv_method *m)
{
    printf("%s %s\n%s\n\nfile      %s\ndistance  %s%s\nthreads   %s\n", m->name, m->version ? m->version : "",
           m->summary ? m->summary : "", path, methods_dists[m->distance],
           m->distance == RV_DIST_CUSTOM ? ", key prefilter when the method gives a key" : "",
           m->flags & RV_FLAG_THREAD_SAFE ? "describes on several threads" : "one scan at a time");
    if (m->flags & RV_FLAG_SEQUENTIAL) printf("sequence  keeps state across consecutive scans\n");
    printf("\nsettings:\n");
    for (uint32_t k = 0; k < m->n_settings; k++) {
        const struct rv_setting *s = &m->settings[k];
        char v[128], range[160];
        plugin_setting_text(s, s->def, v, sizeof v);
        if (s->type == RV_SET_CHOICE) snprintf(range, sizeof range, "%s %s", methods_types[s->type], s->choices);
        else if (s->type == RV_SET_BOOL) snprintf(range, sizeof range, "%s", methods_types[s->type]);
        else snprintf(range, sizeof range, "%s %g..%g", methods_types[s->type], s->min, s->max);
        printf("  %-14s default %-8s %-24s %s\n", s->key, v, range, s->help ? s->help : "");
    }
    if (!m->n_settings) printf("  (none)\n");
}

static int methods_one(const char *name, const char *search, struct err *e)
{
    char path[4096];
    if (strchr(name, '/')) snprintf(path, sizeof path, "%s", name);
    else if (plugin_find(name, search, path, sizeof path, e)) return -1;
    void *so;
    const struct rv_method *m;
    if (plugin_load_table(path, &so, &m, e)) return -1;
    methods_full(path, m);
    plugin_unload(so);
    return 0;
}

/* "searched:" and one line per folder of the search order, with what it held. */
static void methods_searched(FILE *f, const char *order, const struct plugin_info *list, size_t n)
{
    fprintf(f, "searched, in order:\n");
    char walk[8192];
    snprintf(walk, sizeof walk, "%s", order);   /* same size as order: cannot be cut */
    for (char *save = NULL, *dir = strtok_r(walk, ":", &save); dir; dir = strtok_r(NULL, ":", &save)) {
        size_t here = 0, len = strlen(dir);
        for (size_t k = 0; k < n; k++)
            here += !strncmp(list[k].path, dir, len) && list[k].path[len] == '/' && !strchr(list[k].path + len + 1, '/');
        struct stat st;
        if (stat(dir, &st) || !S_ISDIR(st.st_mode)) fprintf(f, "  %s (no such folder)\n", dir);
        else fprintf(f, "  %s (%zu %s)\n", dir, here, here == 1 ? "method" : "methods");
    }
}

static int methods_all(const char *search, struct err *e)
{
    struct plugin_info *list;
    size_t n;
    char order[8192];
    if (plugin_search_order(search, order, sizeof order, e) || plugin_list(search, &list, &n, e)) return -1;
    if (!n) {
        fprintf(stderr, "revisit: methods: no method (NAME.so) found in any folder of the plugin search path\n");
        methods_searched(stderr, order, list, n);
        free(list);
        return CMD_ERROR;
    }
    for (size_t k = 0; k < n; k++) {
        void *so;
        const struct rv_method *m;
        struct err le;
        if (plugin_load_table(list[k].path, &so, &m, &le)) {
            printf("%-16s (cannot load: %s)\n", list[k].name, le.msg);
            continue;
        }
        methods_brief(list[k].name, m);
        plugin_unload(so);
    }
    printf("\n");
    methods_searched(stdout, order, list, n);
    free(list);
    return CMD_OK;
}

int cmd_methods(int argc, char **argv)
{
    const char *search = NULL;
    const struct opt table[] = {
        {"--plugin-path", OPT_STR, &search, "DIRS", "':'-separated folders searched first"},
        {0}};
    struct opt_args args;
    struct err e;
    int go = cmd_parse("methods", about, argc, argv, table, &args, &e);
    if (go != CMD_GO_ON) return go;
    if (args.n > 1) return err_set(&e, "revisit methods: expected at most one NAME, got %d", args.n), cmd_report(&e);
    if (args.n) return methods_one(args.v[0], search, &e) ? cmd_report(&e) : CMD_OK;
    int rc = methods_all(search, &e);
    return rc < 0 ? cmd_report(&e) : rc;
}
