/* cmd_methods.c: `revisit methods [NAME]`: the methods found and their settings. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/cli/cmd.h"
#include "harness/base/opt.h"
#include "harness/run/plugin_host.h"

static const char about[] =
    "List every descriptor method on the plugin search path (--plugin-path, then\n"
    "REVISIT_PLUGIN_PATH, then the install folder) with its settings and\n"
    "defaults; with NAME, describe that one: distance, flags, each setting's\n"
    "type, default, range and meaning.  Use a setting as NAME:key=value.\n"
    "External programs are given by path to 'revisit eval --method'.\n\n";

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

static int methods_all(const char *search, struct err *e)
{
    struct plugin_info *list;
    size_t n;
    if (plugin_list(search, &list, &n, e)) return -1;
    if (!n) printf("no methods found on the plugin search path\n");
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
    free(list);
    return 0;
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
    if (args.n ? methods_one(args.v[0], search, &e) : methods_all(search, &e)) return cmd_report(&e);
    return CMD_OK;
}
