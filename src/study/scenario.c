/* scenario.c — reading scenario files: INI text (parsed with inih) into
 * sections of `key = value` entries that remember their line, command-line
 * overrides, and the accessors of the public API. The meaning of the
 * sections is given to them by scenario_compile.c; the format is specified
 * in docs/formats.md ("Scenario files"). */
#include "study/scenario.h"

#include "core/internal.h"

#include <errno.h>
#ifdef QC_HAVE_INIH
#include <ini.h>
#endif
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

/* ---------------------------------------------------------------- */
/* Sections and entries                                              */
/* ---------------------------------------------------------------- */

static void section_clear(sc_section *s)
{
    for (size_t i = 0; i < s->n; i++) {
        free(s->entries[i].key);
        free(s->entries[i].value);
    }
    free(s->entries);
    free(s->type);
    free(s->name);
}

static sc_section *find_section(qc_scenario *sc, const char *type, const char *name)
{
    for (size_t i = 0; i < sc->nsections; i++) {
        sc_section *s = &sc->sections[i];
        if (strcmp(s->type, type) == 0 &&
            ((!name && !s->name) || (name && s->name && strcmp(name, s->name) == 0)))
            return s;
    }
    return NULL;
}

static qc_status add_section(qc_scenario *sc, const char *type, const char *name, int line,
                             sc_section **out)
{
    if ((*out = find_section(sc, type, name)))
        return QC_OK;
    sc_section *grown = realloc(sc->sections, (sc->nsections + 1) * sizeof *grown);
    if (!grown)
        return qc_fail(QC_ENOMEM, "out of memory");
    sc->sections = grown;
    sc_section *s = &grown[sc->nsections];
    memset(s, 0, sizeof *s);
    s->type = strdup(type);
    s->name = name ? strdup(name) : NULL;
    s->line = line;
    if (!s->type || (name && !s->name)) {
        section_clear(s);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    sc->nsections++;
    *out = s;
    return QC_OK;
}

static sc_entry *find_entry(sc_section *s, const char *key)
{
    for (size_t i = 0; i < s->n; i++)
        if (strcmp(s->entries[i].key, key) == 0)
            return &s->entries[i];
    return NULL;
}

/* Set key = value in section s: replace an existing entry or append. */
static qc_status put_entry(sc_section *s, const char *key, const char *value, int line)
{
    char *v = strdup(value);
    if (!v)
        return qc_fail(QC_ENOMEM, "out of memory");
    sc_entry *e = find_entry(s, key);
    if (e) {
        free(e->value);
        e->value = v;
        e->line = line;
        return QC_OK;
    }
    if (s->n == s->cap) {
        size_t cap = s->cap ? 2 * s->cap : 8;
        sc_entry *grown = realloc(s->entries, cap * sizeof *grown);
        if (!grown) {
            free(v);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
        s->entries = grown;
        s->cap = cap;
    }
    char *k = strdup(key);
    if (!k) {
        free(v);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    s->entries[s->n++] = (sc_entry){k, v, line};
    return QC_OK;
}

static void remove_entry(sc_section *s, const char *key)
{
    sc_entry *e = find_entry(s, key);
    if (!e)
        return;
    free(e->key);
    free(e->value);
    size_t i = (size_t)(e - s->entries);
    memmove(e, e + 1, (s->n - i - 1) * sizeof *e);
    s->n--;
}

/* ---------------------------------------------------------------- */
/* INI reading                                                        */
/* ---------------------------------------------------------------- */
#ifdef QC_HAVE_INIH

typedef struct {
    qc_scenario *sc;
    const char *text;
    size_t len, pos;
    int line;             /* lines handed to inih so far            */
    int raw_indented;     /* the current line starts with a blank    */
    sc_section *section;  /* current section (NULL before any)      */
    int section_line;
    char section_text[128];
    const char *last_key; /* previous handler call, for continuations */
    sc_section *last_section;
    qc_status st;         /* first failure (QC_OK: none yet)        */
    int error_line;
} reader;

static int is_blank(char c) { return c == ' ' || c == '\t'; }

static int valid_name(const char *s)
{
    size_t n = strlen(s);
    if (n == 0 || n > QC_SCENARIO_NAME_MAX)
        return 0;
    for (; *s; s++)
        if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') ||
              *s == '-' || *s == '_' || *s == '+'))
            return 0;
    return 1;
}

static void reader_fail(reader *r, int line, qc_status st, const char *fmt, const char *a,
                        const char *b)
{
    if (r->st != QC_OK)
        return;
    char msg[768];
    snprintf(msg, sizeof msg, fmt, a ? a : "", b ? b : "");
    r->st = qc_fail(st, "%s:%d: %s", r->sc->file, line, msg);
    r->error_line = line;
}

/* A section header line "[type]" or "[type name]": record it. */
static void header_line(reader *r, const char *line, size_t n)
{
    const char *close = memchr(line, ']', n);
    if (!close)
        return; /* inih reports the syntax error */
    size_t inner = (size_t)(close - line - 1);
    if (inner >= sizeof r->section_text)
        inner = sizeof r->section_text - 1;
    char buf[128];
    memcpy(buf, line + 1, inner);
    buf[inner] = '\0';
    char *type = buf;
    while (is_blank(*type))
        type++;
    char *end = type + strlen(type);
    while (end > type && is_blank(end[-1]))
        *--end = '\0';
    snprintf(r->section_text, sizeof r->section_text, "%s", type);
    char *name = type;
    while (*name && !is_blank(*name))
        name++;
    if (*name) {
        *name++ = '\0';
        while (is_blank(*name))
            name++;
    } else
        name = NULL;

    static const char *const plain[] = {"scenario", "receiver", "design", "sweep", "plots",
                                        "density", "require"};
    int known = strcmp(type, "alphabet") == 0;
    for (size_t i = 0; i < sizeof plain / sizeof plain[0]; i++)
        known |= strcmp(type, plain[i]) == 0;
    if (!known) {
        reader_fail(r, r->line, QC_EINVAL,
                    "unknown section [%s] (sections: [scenario], [receiver], [design], "
                    "[alphabet NAME], [sweep], [plots], [density], [require])%s",
                    type, "");
        return;
    }
    if (strcmp(type, "alphabet") == 0) {
        if (!name) {
            reader_fail(r, r->line, QC_EINVAL,
                        "[alphabet] needs a name: [alphabet NAME]%s%s", NULL, NULL);
            return;
        }
        if (!valid_name(name)) {
            reader_fail(r, r->line, QC_EINVAL,
                        "alphabet name '%s' must be 1 to 32 letters, digits, '-', '_' or "
                        "'+'%s",
                        name, "");
            return;
        }
    } else if (name) {
        reader_fail(r, r->line, QC_EINVAL, "section [%s] takes no name (got '%s')", type, name);
        return;
    }
    sc_section *s;
    qc_status st = add_section(r->sc, type, name, r->line, &s);
    if (st != QC_OK) {
        r->st = st;
        r->error_line = r->line;
        return;
    }
    r->section = s;
    r->section_line = r->line;
    r->last_key = NULL;
}

/* fgets-like reader for inih over the text; counts lines, records
 * section headers, cuts " #" comments and rejects lines that do not fit. */
static char *read_line(char *buf, int num, void *stream)
{
    reader *r = stream;
    if (r->st != QC_OK || r->pos >= r->len)
        return NULL;
    if (r->pos == 0 && r->len >= 3 && memcmp(r->text, "\xEF\xBB\xBF", 3) == 0)
        r->pos = 3; /* a UTF-8 byte-order mark */
    const char *start = r->text + r->pos;
    size_t rest = r->len - r->pos;
    const char *nl = memchr(start, '\n', rest);
    size_t n = nl ? (size_t)(nl - start) + 1 : rest;
    r->line++;
    r->pos += n;
    size_t body = n - (nl != NULL);
    if (body > 0 && start[body - 1] == '\r')
        body--;
    if (memchr(start, '\0', body)) {
        reader_fail(r, r->line, QC_EFORMAT, "NUL byte in the line%s%s", NULL, NULL);
        return NULL;
    }
    if (body + 2 > (size_t)num) {
        char msg[64];
        snprintf(msg, sizeof msg, "%d", num - 2);
        reader_fail(r, r->line, QC_EFORMAT,
                    "line longer than %s characters; continue a long value on indented "
                    "lines%s",
                    msg, "");
        return NULL;
    }
    memcpy(buf, start, body);
    buf[body] = '\0';
    /* a comment: '#' at the start of a value or after a blank */
    for (size_t i = 0; i < body; i++)
        if (buf[i] == '#' && (i == 0 || is_blank(buf[i - 1]) || buf[i - 1] == '=')) {
            buf[i] = '\0';
            body = i;
            break;
        }
    r->raw_indented = body > 0 && is_blank(buf[0]);
    size_t lead = 0;
    while (lead < body && is_blank(buf[lead]))
        lead++;
    if (lead < body && buf[lead] == '[')
        header_line(r, buf + lead, body - lead);
    buf[body] = '\n';
    buf[body + 1] = '\0';
    return buf;
}

static int on_entry(void *user, const char *section, const char *key, const char *value)
{
    (void)section;
    reader *r = user;
    if (r->st != QC_OK)
        return 0;
    if (!r->section) {
        reader_fail(r, r->line, QC_EINVAL,
                    "'%s' comes before any [section]; start with [receiver]%s", key, NULL);
        return 0;
    }
    /* An indented line continues the previous value (inih passes the same
     * key again): join with a blank. */
    if (r->raw_indented && r->last_key && r->last_section == r->section &&
        strcmp(r->last_key, key) == 0) {
        sc_entry *e = find_entry(r->section, key);
        size_t a = strlen(e->value), b = strlen(value);
        char *joined = malloc(a + b + 2);
        if (!joined) {
            r->st = qc_fail(QC_ENOMEM, "out of memory");
            return 0;
        }
        memcpy(joined, e->value, a);
        joined[a] = ' ';
        memcpy(joined + a + 1, value, b + 1);
        free(e->value);
        e->value = joined;
        return 1;
    }
    /* The same key twice in a section, or in both [receiver] and [design],
     * is a mistake worth naming. */
    sc_entry *dup = find_entry(r->section, key);
    if (!dup && (strcmp(r->section->type, "receiver") == 0 ||
                 strcmp(r->section->type, "design") == 0)) {
        sc_section *other = find_section(
            r->sc, strcmp(r->section->type, "receiver") == 0 ? "design" : "receiver", NULL);
        dup = other ? find_entry(other, key) : NULL;
    }
    if (dup) {
        char first[32];
        snprintf(first, sizeof first, "%d", dup->line);
        reader_fail(r, r->line, QC_EINVAL, "'%s' is already set at line %s", key, first);
        return 0;
    }
    qc_status st = put_entry(r->section, key, value, r->line);
    if (st != QC_OK) {
        r->st = st;
        return 0;
    }
    r->last_key = r->section->entries[r->section->n - 1].key;
    r->last_section = r->section;
    return 1;
}

#endif /* QC_HAVE_INIH */

void qc_scenario_free(qc_scenario *sc)
{
    if (!sc)
        return;
    sc_compiled_clear(sc);
    for (size_t i = 0; i < sc->nsections; i++)
        section_clear(&sc->sections[i]);
    free(sc->sections);
    free(sc->file);
    free(sc);
}

qc_status qc_scenario_parse(const char *text, size_t len, const char *name, qc_scenario **out)
{
    *out = NULL;
    if (!text && len > 0)
        return qc_fail(QC_EINVAL, "no scenario text given");
    if (len > QC_SCENARIO_MAX_BYTES)
        return qc_fail(QC_EFORMAT, "%s: larger than %d bytes", name ? name : "scenario",
                       QC_SCENARIO_MAX_BYTES);
    qc_scenario *sc = calloc(1, sizeof *sc);
    if (!sc)
        return qc_fail(QC_ENOMEM, "out of memory");
    sc->file = strdup(name ? name : "scenario");
    if (!sc->file) {
        free(sc);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
#ifdef QC_HAVE_INIH
    reader r = {.sc = sc, .text = text ? text : "", .len = len};
    int bad = ini_parse_stream(read_line, &r, on_entry, &r);
    qc_status st = r.st;
    int error_line = r.error_line;
#else
    int bad = 0, error_line = 0;
    qc_status st = qc_fail(QC_EINVAL, "%s: this build of quantcap reads no scenario files "
                                      "(built without inih)",
                           sc->file);
#endif
    if (bad > 0 && (st == QC_OK || bad < error_line))
        st = qc_fail(QC_EFORMAT,
                     "%s:%d: expected 'key = value', a [section] header or a comment", sc->file,
                     bad);
    else if (bad < 0 && st == QC_OK)
        st = qc_fail(QC_ENOMEM, "out of memory reading %s", sc->file);
    if (st == QC_OK)
        st = sc_compile(sc);
    if (st != QC_OK) {
        qc_scenario_free(sc);
        return st;
    }
    *out = sc;
    return QC_OK;
}

qc_status qc_scenario_read(const char *path, qc_scenario **out)
{
    *out = NULL;
    struct stat sb;
    if (stat(path, &sb) == 0 && S_ISDIR(sb.st_mode))
        return qc_fail(QC_EIO, "%s: is a directory, expected a scenario file", path);
    FILE *f = fopen(path, "rb");
    if (!f)
        return qc_fail(QC_EIO, "%s: cannot open: %s", path, strerror(errno));
    char *buf = malloc(QC_SCENARIO_MAX_BYTES + 1);
    if (!buf) {
        fclose(f);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    size_t n = fread(buf, 1, QC_SCENARIO_MAX_BYTES + 1, f);
    int err = ferror(f);
    fclose(f);
    qc_status st;
    if (err)
        st = qc_fail(QC_EIO, "%s: cannot read", path);
    else
        st = qc_scenario_parse(buf, n, path, out);
    free(buf);
    return st;
}

/* ---------------------------------------------------------------- */
/* Overrides                                                          */
/* ---------------------------------------------------------------- */

/* Copy the scenario's sections so that a failed override can be undone. */
static qc_status copy_sections(const qc_scenario *sc, sc_section **out, size_t *n)
{
    *out = calloc(sc->nsections ? sc->nsections : 1, sizeof **out);
    *n = 0;
    if (!*out)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < sc->nsections; i++) {
        const sc_section *s = &sc->sections[i];
        sc_section *d = &(*out)[i];
        d->type = strdup(s->type);
        d->name = s->name ? strdup(s->name) : NULL;
        d->line = s->line;
        *n = i + 1;
        if (!d->type || (s->name && !d->name))
            return qc_fail(QC_ENOMEM, "out of memory");
        for (size_t k = 0; k < s->n; k++)
            if (put_entry(d, s->entries[k].key, s->entries[k].value, s->entries[k].line) !=
                QC_OK)
                return QC_ENOMEM;
    }
    return QC_OK;
}

static void free_sections(sc_section *s, size_t n)
{
    for (size_t i = 0; i < n; i++)
        section_clear(&s[i]);
    free(s);
}

/* Apply KEY=VALUE (a design key, everywhere) to the sections. */
static qc_status override_design_key(qc_scenario *sc, const char *key, const char *value)
{
    sc_section *sweep = find_section(sc, "sweep", NULL);
    if (sweep && find_entry(sweep, key))
        return put_entry(sweep, key, value, 0);
    /* a key two alphabet sections set is what tells them apart: one value
     * for all would leave their names (and the plots' titles) on curves
     * that are the same */
    const char *first = NULL, *second = NULL;
    for (size_t i = 0; i < sc->nsections && !second; i++)
        if (strcmp(sc->sections[i].type, "alphabet") == 0 &&
            find_entry(&sc->sections[i], key)) {
            if (first)
                second = sc->sections[i].name;
            else
                first = sc->sections[i].name;
        }
    if (second)
        return qc_fail(QC_EINVAL,
                       "--set %s=%s: [alphabet %s] and [alphabet %s] each set '%s', which tells "
                       "them apart; one value for all would keep their names on the same "
                       "curves: set one with --set alphabet.NAME.%s=VALUE",
                       key, value, first, second, key, key);
    for (size_t i = 0; i < sc->nsections; i++)
        if (strcmp(sc->sections[i].type, "alphabet") == 0 ||
            strcmp(sc->sections[i].type, "design") == 0)
            remove_entry(&sc->sections[i], key);
    sc_section *receiver;
    qc_status st = add_section(sc, "receiver", NULL, 0, &receiver);
    return st == QC_OK ? put_entry(receiver, key, value, 0) : st;
}

static qc_status apply_override(qc_scenario *sc, const char *assignment)
{
    const char *eq = strchr(assignment, '=');
    if (!eq || eq == assignment)
        return qc_fail(QC_EINVAL, "--set '%s': expected KEY=VALUE or SECTION.KEY=VALUE",
                       assignment);
    size_t klen = (size_t)(eq - assignment);
    char path[160];
    if (klen >= sizeof path)
        return qc_fail(QC_EINVAL, "--set: key too long");
    memcpy(path, assignment, klen);
    path[klen] = '\0';
    const char *value = eq + 1;
    char *dot = strrchr(path, '.');
    if (!dot) {
        if (!qc_setting_known(path)) {
            const char *near = qc_setting_suggest(path);
            return qc_fail(QC_EINVAL, "--set %s: unknown key '%s'%s%s%s", assignment, path,
                           near ? " (did you mean '" : "", near ? near : "", near ? "'?)" : "");
        }
        return override_design_key(sc, path, value);
    }
    *dot = '\0';
    const char *key = dot + 1;
    char *type = path, *name = NULL;
    char *dot2 = strchr(path, '.');
    if (dot2) {
        *dot2 = '\0';
        name = dot2 + 1;
    }
    if (strcmp(type, "alphabet") == 0) {
        sc_section *s = name ? find_section(sc, "alphabet", name) : NULL;
        if (!s)
            return qc_fail(QC_EINVAL, "--set %s: the scenario has no [alphabet %s]", assignment,
                           name ? name : "");
        return put_entry(s, key, value, 0);
    }
    static const char *const plain[] = {"scenario", "receiver", "design", "sweep", "plots",
                                        "density", "require"};
    for (size_t i = 0; i < sizeof plain / sizeof plain[0]; i++)
        if (!name && strcmp(type, plain[i]) == 0) {
            sc_section *s;
            qc_status st = add_section(sc, type, NULL, 0, &s);
            if (st == QC_OK && (strcmp(type, "receiver") == 0 || strcmp(type, "design") == 0)) {
                sc_section *other =
                    find_section(sc, strcmp(type, "receiver") == 0 ? "design" : "receiver", NULL);
                if (other)
                    remove_entry(other, key);
            }
            return st == QC_OK ? put_entry(s, key, value, 0) : st;
        }
    return qc_fail(QC_EINVAL,
                   "--set %s: unknown section '%s' (scenario, receiver, design, "
                   "alphabet.NAME, sweep, plots, density, require)",
                   assignment, type);
}

qc_status qc_scenario_override(qc_scenario *sc, const char *assignment)
{
    sc_section *saved;
    size_t nsaved;
    qc_status st = copy_sections(sc, &saved, &nsaved);
    if (st != QC_OK) {
        free_sections(saved, nsaved);
        return st;
    }
    st = apply_override(sc, assignment);
    if (st == QC_OK)
        st = sc_compile(sc);
    if (st != QC_OK) { /* restore, keeping the message */
        char msg[1024];
        snprintf(msg, sizeof msg, "%s", qc_last_error());
        free_sections(sc->sections, sc->nsections);
        sc->sections = saved;
        sc->nsections = nsaved;
        sc_compile(sc);
        return qc_fail(st, "%s", msg);
    }
    free_sections(saved, nsaved);
    return QC_OK;
}

/* ---------------------------------------------------------------- */
/* Accessors                                                          */
/* ---------------------------------------------------------------- */

size_t qc_scenario_npoints(const qc_scenario *sc) { return sc->npoints; }
size_t qc_scenario_nalphabets(const qc_scenario *sc) { return sc->nalphabets; }

const char *qc_scenario_alphabet(const qc_scenario *sc, size_t i)
{
    return i < sc->nalphabets ? sc->alphabets[i].name : NULL;
}

size_t qc_scenario_naxes(const qc_scenario *sc) { return sc->naxes; }

const char *qc_scenario_axis_key(const qc_scenario *sc, size_t i)
{
    return i < sc->naxes ? sc->axes[i].key : NULL;
}

size_t qc_scenario_axis_size(const qc_scenario *sc, size_t i)
{
    return i < sc->naxes ? sc->axes[i].n : 0;
}

const char *qc_scenario_axis_value(const qc_scenario *sc, size_t i, size_t j)
{
    return i < sc->naxes && j < sc->axes[i].n ? sc->axes[i].values[j] : NULL;
}

const char *qc_scenario_hash(const qc_scenario *sc) { return sc->hash; }
