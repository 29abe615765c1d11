/* study.c - read -> validate for one results file (see tw_study.h). */
#include "rules/tw_study.h"

#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "read/tw_column_map.h"
#include "rules/tw_rules.h"
#include "rules/tw_validate.h"

/* A file that exists, is not a directory and can be opened for reading. */
static int readable_file(const char *path)
{
    struct stat st;
    return access(path, R_OK) == 0 && stat(path, &st) == 0 && !S_ISDIR(st.st_mode);
}

int tw_study_load(tw_study *s, const char *results_path, const char *site_path)
{
    return tw_study_load_mapped(s, results_path, site_path, NULL);
}

/* Results read through the map the command line or the site names, if any. */
static int read_results(tw_study *s, const char *results_path, const char *columns_path)
{
    const char *map_path = columns_path ? columns_path : s->site.columns;
    if (!map_path)
        return tw_results_read(results_path, &s->results, &s->diags);
    tw_column_map map;
    if (tw_column_map_read(map_path, &map, &s->diags) != 0) {
        s->unreadable = !readable_file(map_path);
        tw_column_map_free(&map);
        return -2;
    }
    int rc = tw_results_read_map(results_path, &map, &s->results, &s->diags);
    tw_column_map_free(&map);
    return rc;
}

int tw_study_load_mapped(tw_study *s, const char *results_path, const char *site_path,
                         const char *columns_path)
{
    memset(s, 0, sizeof *s);
    tw_diags_init(&s->diags);
    /* tw_site_load() starts from the defaults itself. */
    if (!site_path && tw_site_defaults(&s->site) != 0)
        return -1;
    int site_rc = site_path ? tw_site_load(site_path, &s->site, &s->diags) : 0;
    if (site_path && tw_site_check_rules(&s->site, site_path, &s->diags) != 0)
        site_rc = -1;
    if (site_rc != 0) {
        s->site_bad = 1;
        s->unreadable = !readable_file(site_path); /* I/O (exit 3), not bad data */
        return -1;
    }
    int rc = read_results(s, results_path, columns_path);
    if (rc == -2)
        return -1;
    if (rc != 0) {
        /* A file that exists and can be read but is not results data is bad data (exit 1);
         * only a file that cannot be read at all is an I/O error (exit 3). */
        s->unreadable = !readable_file(results_path);
        return -1;
    }
    if (tw_bus_set_build(&s->results, &s->buses) != 0)
        return -1;
    tw_validate(&s->results, &s->buses, &s->site, &s->diags);
    s->study_errors = tw_bus_set_attribute(&s->buses, &s->diags);
    return 0;
}

void tw_study_free(tw_study *s)
{
    tw_bus_set_free(&s->buses);
    tw_results_free(&s->results);
    tw_site_free(&s->site);
    tw_diags_free(&s->diags);
    memset(s, 0, sizeof *s);
}
