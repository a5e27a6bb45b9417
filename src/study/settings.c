/* settings.c — the key = value vocabulary of a design, shared by the
 * `design` command's flags and by scenario files: each key's value is
 * checked when it is set, and the whole set is turned into a model and a
 * design request by qc_settings_build. */
#include "study/settings_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef enum { K_TEXT, K_NUMBER, K_LIST, K_WHOLE, K_CHOICE, K_SWITCH } key_kind;

typedef struct {
    qc_setting_info info;
    key_kind kind;
    size_t lo, hi;        /* K_WHOLE range                        */
    const char *choices;  /* K_CHOICE: comma-separated             */
    double dmin, dmax;    /* K_NUMBER range (both 0: any number)  */
    int min_exclusive;    /* K_NUMBER: value must be > dmin       */
} key_spec;

#define INF INFINITY
#define KEY(name, meta, help) .info = {name, meta, help}
#define TEXT(name, meta, help) {KEY(name, meta, help), .kind = K_TEXT}
#define LIST(name, meta, help) {KEY(name, meta, help), .kind = K_LIST}
#define WHOLE(name, meta, help, l, h) {KEY(name, meta, help), .kind = K_WHOLE, .lo = l, .hi = h}
#define CHOICE(name, meta, help, c) {KEY(name, meta, help), .kind = K_CHOICE, .choices = c}
#define NUMBER(name, meta, help) {KEY(name, meta, help), .kind = K_NUMBER}
#define SWITCH(name, help) {KEY(name, NULL, help), .kind = K_SWITCH}
/* A number key with a range: > l (open) or >= l (closed), <= h. */
#define NUMBER_ABOVE(name, meta, help, l)                                                  \
    {KEY(name, meta, help), .kind = K_NUMBER, .dmin = l, .dmax = INF, .min_exclusive = 1}
#define NUMBER_FROM(name, meta, help, l, h)                                                \
    {KEY(name, meta, help), .kind = K_NUMBER, .dmin = l, .dmax = h}

static const key_spec keys[] = {
    TEXT("model", "NAME", "noise model (see 'quantcap models')"),
    LIST("levels", "L1,...,Ln", "transmitted levels (model units)"),
    LIST("probabilities", "P1,...,Pn", "input law (mi: the law rated; capacity: the start)"),
    NUMBER("snr-db", "X", "requested SNR E[x^2]/sigma^2, dB: sets sigma (model gauss)"),
    WHOLE("bits", "B", "ADC resolution: 2^B cells (1..16)", 1, QC_MAX_BITS),
    WHOLE("cells", "K", "number of quantizer cells (2..65536)", 2, (size_t)1 << QC_MAX_BITS),
    CHOICE("objective", "mi|capacity|gmi",
           "rate to maximize: mi (given law), capacity (law optimized), gmi (BICM, Gray "
           "labels, given law); default mi",
           "mi,capacity,gmi"),
    CHOICE("quantizer", "NAME",
           "threshold strategy: optimal, uniform, lloyd-max, fixed, converter (default "
           "optimal)",
           "optimal,uniform,lloyd-max,fixed,converter"),
    WHOLE("fine-cells", "N", "fine-grid cells for the optimal quantizer (default automatic)",
          2, (size_t)1 << 22),
    SWITCH("keep-decisions", "optimal quantizer: move the thresholds nearest to the MAP "
           "decision boundaries onto them, so hard decisions lose nothing (automatic with a "
           "BER target or a hard-decision FEC)"),
    LIST("thresholds", "T1,...,Tk", "evaluate these thresholds (quantizer fixed)"),
    NUMBER("tol", "T", "certification tolerance in bits (default 1e-9)"),
    TEXT("alphabet", "SPEC",
         "levels by name: pam:M (bipolar), upam:M (intensity 0..1; OOK = upam:2), qam:M "
         "(square QAM, sqrt(M)-PAM per quadrature); in the plane: psk:M, "
         "apsk:R1/N1[/DEG],R2/N2[/DEG],..., hex:M"),
    TEXT("table", "FILE", "measured densities for model table (format in docs/formats.md)"),
    /* physical receiver (front end); units in docs/models.md */
    NUMBER_FROM("received-dbm", "P", "average received optical power, dBm", -INF, INF),
    NUMBER_ABOVE("extinction-db", "E",
                 "extinction ratio P1/P0 of the intensity levels, dB (default: infinite)", 0.0),
    NUMBER_ABOVE("responsivity", "R", "photodiode responsivity, A/W", 0.0),
    NUMBER_ABOVE("bandwidth", "B", "electrical noise bandwidth, Hz", 0.0),
    NUMBER_FROM("thermal-density", "I", "input-referred thermal noise current, pA/sqrt(Hz)",
                0.0, INF),
    NUMBER_ABOVE("load-resistance", "R", "load resistance for 4kT/R thermal noise, ohm", 0.0),
    NUMBER_ABOVE("temperature", "T", "receiver temperature, K (default 290)", 0.0),
    NUMBER_FROM("dark-current", "I", "primary dark current, A (default 0)", 0.0, INF),
    NUMBER_FROM("apd-gain", "M",
                "APD mean avalanche gain M (parameter of apd, apd-gauss; front end: "
                "default 1 = PIN)",
                1.0, INF),
    NUMBER_FROM("apd-k", "K",
                "APD ionization ratio k (parameter of apd, apd-gauss; default 0)", 0.0, 1.0),
    NUMBER_ABOVE("slot-time", "T", "slot (integration) time, s", 0.0),
    NUMBER_ABOVE("wavelength-nm", "L", "optical wavelength, nm (photon counting)", 0.0),
    NUMBER_ABOVE("efficiency", "ETA", "detector quantum efficiency, (0, 1] (default 1)", 0.0),
    NUMBER_FROM("dark-count-rate", "D", "dark and background count rate, 1/s (default 0)", 0.0,
                INF),
    NUMBER_FROM("osnr-db", "X", "OSNR in the reference bandwidth, dB (model gauss)", -INF, INF),
    NUMBER_ABOVE("symbol-rate", "RS", "symbol rate, baud (with osnr-db; and for rates in Gb/s)",
                 0.0),
    WHOLE("polarizations", "P", "polarizations carrying signal, 1 or 2 (default: 2 for osnr-db "
          "and QAM, else 1)", 1, 2),
    TEXT("fec", "CODE", "FEC code to close the link with: a name from data/fec.tsv, or "
         "overhead=PCT,ber=X | overhead=PCT,ngmi=X (rate=R for the overhead)"),
    NUMBER_ABOVE("ref-bandwidth", "B", "OSNR reference bandwidth, Hz (default 12.5e9)", 0.0),
    /* alphabets and input design (docs/alphabets.md) */
    LIST("level-grid", "LO,HI,N",
         "N equally spaced candidate levels on [LO, HI]; the input law is designed on them"),
    NUMBER_ABOVE("peak-limit", "A",
                 "input peak constraint |x| <= A, model units (intensity: 0 <= x <= A)", 0.0),
    NUMBER_ABOVE("power-limit", "P",
                 "input second-moment constraint E[x^2] <= P, model units squared (electrical "
                 "power; QAM: E|x|^2)",
                 0.0),
    NUMBER("mean-limit", "M",
           "input mean constraint E[x] <= M, model units (average optical power of intensity "
           "levels)"),
    SWITCH("optimize-levels", "move the levels to maximize the objective (Nelder-Mead)"),
    WHOLE("level-starts", "S", "starts of the level search (default 3)", 1, 64),
    WHOLE("blocklength", "N", "blocklength for the normal approximation (with error-rate)", 1,
          (size_t)1 << 50),
    NUMBER("error-rate", "E", "block error probability in (0, 1) (with blocklength)"),
    NUMBER_FROM("peak-dbm", "P", "received optical power of the top level, dBm (instead of "
                "received-dbm)", -INF, INF),
    /* a real converter (quantizer converter; docs/models.md) */
    LIST("full-scale", "LO,HI", "converter full-scale range, receiver output units (x gain)"),
    NUMBER_ABOVE("enob", "E", "converter effective bits at the signal frequency (default: bits)",
                 0.0),
    NUMBER("sinad-db", "S", "converter SINAD of a full-scale sine, dB (instead of enob)"),
    NUMBER_FROM("jitter-s", "T", "converter aperture jitter, rms seconds (default 0)", 0.0, INF),
    NUMBER_ABOVE("signal-freq", "F", "frequency of the full-scale sine the jitter acts on, Hz",
                 0.0),
    NUMBER_FROM("dnl-lsb", "X", "peak random DNL, LSB, below 1 (default 0)", 0.0, INF),
    NUMBER_FROM("inl-lsb", "Y", "peak random INL bow, LSB (default 0)", 0.0, INF),
    WHOLE("seed", "S", "seed of the random draws: a converter's DNL/INL, the simulation of a "
          "channel with memory (default 1)", 0, 4294967295u),
    WHOLE("draws", "D", "DNL/INL draws rated: mean and spread of the rate (default 1)", 1,
          100000),
    TEXT("transitions", "FILE", "measured converter transition levels, one per line"),
    TEXT("converter-gain", "G|best|agc:K",
         "gain ahead of the converter: a number (default 1), best (for the objective) or "
         "agc:K (K x rms of the receiver output fills half the full scale)"),
    TEXT("converter-offset", "O|best",
         "offset ahead of the converter, full-scale units: a number (default 0; agc: the "
         "mean at mid-scale) or best"),
    /* amplified coherent fibre link (src/frontend/fibre_link.c) */
    NUMBER_FROM("spans", "N",
                "amplified spans of the fibre link (fractional values interpolate, as "
                "require searches)", 1.0, 1e4),
    NUMBER_ABOVE("span-km", "L", "length of one amplified span, km", 0.0),
    NUMBER_ABOVE("length-km", "L",
                 "fibre length, km (amplified link: spans x span-km, instead of spans)", 0.0),
    NUMBER_ABOVE("loss-db-km", "A", "fibre attenuation, dB/km (default 0.2)", 0.0),
    NUMBER_FROM("nf-db", "F", "optical amplifier noise figure, dB", -INF, INF),
    NUMBER_ABOVE("gain-db", "G", "amplifier gain, dB (default: the span loss)", 0.0),
    NUMBER_FROM("launch-dbm", "P",
                "launch power (per channel), dBm (amplified link default: the optimum)", -INF,
                INF),
    NUMBER("chromatic-dispersion", "D", "fibre chromatic dispersion, ps/(nm km) (default 17)"),
    NUMBER_FROM("gamma", "G", "fibre nonlinear coefficient, 1/(W km) (default 1.3; 0: linear)",
                0.0, INF),
    WHOLE("channels", "N", "WDM channels (default 1)", 1, 10000),
    NUMBER_ABOVE("channel-spacing-ghz", "S", "WDM channel spacing, GHz", 0.0),
    NUMBER_FROM("coherence", "E",
                "coherent-accumulation exponent of the NLI, N^(1+E), [0, 1) (default 0)", 0.0,
                1.0),
    NUMBER("transceiver-snr-db", "X", "transceiver SNR limit, dB (default: none)"),
    /* unamplified intensity link and transmitter noise (src/frontend) */
    NUMBER_FROM("connector-loss-db", "C", "loss of all connectors of the link, dB (default 0)",
                0.0, INF),
    NUMBER_FROM("splice-loss-db", "S", "loss of all splices of the link, dB (default 0)", 0.0,
                INF),
    NUMBER_FROM("penalty-db", "P",
                "power penalty budget of the link (dispersion, ageing, margin), dB (default 0)",
                0.0, INF),
    NUMBER("rin-db-hz", "R", "transmitter relative intensity noise, dB/Hz (default: none)"),
    /* free-space link (src/frontend/free_space.c) */
    NUMBER_ABOVE("range-km", "R", "free-space link range, km", 0.0),
    NUMBER_ABOVE("tx-aperture-m", "D", "transmit aperture diameter, m", 0.0),
    NUMBER_ABOVE("rx-aperture-m", "D", "receive aperture diameter, m", 0.0),
    NUMBER_FROM("pointing-loss-db", "L", "pointing loss, dB (default 0)", 0.0, INF),
    NUMBER_FROM("atmosphere-loss-db", "L", "atmospheric loss, dB (default 0)", 0.0, INF),
    NUMBER_FROM("background-radiance", "L",
                "background spectral radiance, W/(m^2 sr nm) (default 0)", 0.0, INF),
    NUMBER_ABOVE("field-of-view-mrad", "F", "receiver full field of view, mrad", 0.0),
    NUMBER_ABOVE("filter-nm", "W", "receiver optical filter bandwidth, nm", 0.0),
    /* optical pre-amplifier (model preamp) */
    NUMBER_ABOVE("optical-bandwidth", "B", "optical filter bandwidth before direct detection, Hz",
                 0.0),
    WHOLE("ase-polarizations", "P",
          "polarizations of the ASE detected: 1 behind a polarizer, else 2 (default 2)", 1, 2),
    /* channels with memory (docs/models.md, docs/methods.md) */
    LIST("taps", "H0,H1,...", "intersymbol interference: y_k = sum_i h_i x_(k-i) + noise "
         "(up to 1024 trellis states); complex taps a+bj (coherent)"),
    TEXT("response", "SPEC", "ISI taps from a response sampled at the symbol rate: gauss:B, "
         "bessel:N:B, rc:B (B = 3-dB bandwidth / symbol rate) or dispersion:PS_NM (at 1550 "
         "nm; needs symbol-rate)"),
    CHOICE("detection", "intensity|coherent",
           "receiver of a channel with memory: intensity (one real output; dispersion as "
           "seen after square-law detection) or coherent (complex taps, I and Q quantized; "
           "default for qam and complex taps)",
           "intensity,coherent"),
    WHOLE("symbols", "N", "symbols simulated for the rates of a channel with memory (default "
          "200000)", 4000, (size_t)1 << 40),
    NUMBER_ABOVE("rate-ci", "B",
                 "channel with memory: the widest 95 % interval (+-B bit/symbol) of the final "
                 "information rate; its symbols grow until it is met",
                 0.0),
    /* probabilistic shaping (docs/alphabets.md) */
    TEXT("shaping", "mb:NU|entropy:H|best|none",
         "Maxwell-Boltzmann law p(x) ~ exp(-NU x^2) on pam/qam levels, exp(-NU x) on intensity "
         "levels (upam, intensity models): by NU, by its entropy H bits/symbol, or best for "
         "the objective; levels scaled to the uniform law's power (E[x^2]; intensities: E[x])"),
    /* two-dimensional constellations and coherent receivers (quantcap/iq.h) */
    TEXT("constellation", "FILE",
         "two-dimensional points from FILE: lines 'x y [probability|-] [label]'"),
    CHOICE("iq-quantizer", "product|polar",
           "two-dimensional receiver: product (one quantizer per quadrature, bits/cells per "
           "axis; default) or polar (amplitude rings x phase sectors)",
           "product,polar"),
    WHOLE("amplitude-cells", "A", "polar receiver: amplitude rings (A >= 1)", 1, 256),
    WHOLE("phase-cells", "P", "polar receiver: phase sectors (P >= 1)", 1, 1024),
    NUMBER_FROM("phase-noise-deg", "S",
                "residual phase error ahead of the 2-D receiver, degrees rms (default 0)", 0.0,
                360.0),
    CHOICE("phase-noise-law", "gauss|tikhonov",
           "law of the phase error: gauss (wrapped Gaussian, default) or tikhonov",
           "gauss,tikhonov"),
};

#define NKEYS (sizeof keys / sizeof keys[0])
const qc_setting_info *qc_setting_keys(size_t *n)
{
    static qc_setting_info infos[NKEYS];
    for (size_t i = 0; i < NKEYS; i++)
        infos[i] = keys[i].info;
    *n = NKEYS;
    return infos;
}

static const key_spec *find_key(const char *key)
{
    for (size_t i = 0; i < NKEYS; i++)
        if (strcmp(keys[i].info.key, key) == 0)
            return &keys[i];
    return NULL;
}

int qc_setting_is_design_key(const char *key) { return find_key(key) != NULL; }

static int is_model_param(const char *key)
{
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++)
        if (qc_model_param_index(types[t], key) >= 0)
            return 1;
    return 0;
}

int qc_setting_known(const char *key) { return key && (find_key(key) || is_model_param(key)); }

/* Names given up for clearer ones: each old name is refused with a hint
 * to its successor. */
static const char *const renamed[][2] = {
    {"peak", "peak-limit"},       {"power", "power-limit"}, {"mean", "mean-limit"},
    {"power-dbm", "received-dbm"}, {"gain", "apd-gain"},     {"k", "apd-k"},
};

const char *qc_setting_renamed(const char *old)
{
    for (size_t i = 0; old && i < sizeof renamed / sizeof renamed[0]; i++)
        if (strcmp(renamed[i][0], old) == 0)
            return renamed[i][1];
    return NULL;
}

const char *qc_setting_suggest(const char *key)
{
    const char *now = qc_setting_renamed(key); /* an old name: its new one */
    if (now)
        return now;
    const char *best = NULL;
    size_t bd = 4; /* suggest only close names */
    for (size_t i = 0; i < NKEYS; i++) {
        size_t d = qc_edit_distance(key, keys[i].info.key);
        if (d < bd) {
            bd = d;
            best = keys[i].info.key;
        }
    }
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++)
        for (size_t i = 0; i < types[t]->nparams; i++) {
            size_t d = qc_edit_distance(key, types[t]->params[i].name);
            if (d < bd) {
                bd = d;
                best = types[t]->params[i].name;
            }
        }
    return best;
}

qc_status qc_settings_alloc(qc_settings **out)
{
    *out = calloc(1, sizeof **out);
    return *out ? QC_OK : qc_fail(QC_ENOMEM, "out of memory");
}

void qc_settings_free_lists(qc_settings *s)
{
    free(s->levels);
    free(s->probabilities);
    free(s->thresholds);
    s->levels = s->probabilities = s->thresholds = NULL;
    free(s->transitions);
    s->transitions = NULL;
    s->ntransitions = 0;
    qc_plane_free(s->plane);
    s->plane = NULL;
}

void qc_settings_free(qc_settings *s)
{
    if (!s)
        return;
    for (size_t i = 0; i < s->n; i++) {
        free(s->key[i]);
        free(s->value[i]);
    }
    qc_settings_free_lists(s);
    free(s);
}

void qc_settings_drop_alternatives(qc_settings *s, const char *key)
{
    static const char *const groups[][3] = {{"snr-db", "osnr-db", "sigma"},
                                            {"spans", "length-km", NULL}};
    if (!s || !key)
        return;
    for (size_t g = 0; g < sizeof groups / sizeof groups[0]; g++) {
        int member = 0;
        for (size_t j = 0; j < 3 && groups[g][j]; j++)
            member |= strcmp(groups[g][j], key) == 0;
        for (size_t j = 0; member && j < 3 && groups[g][j]; j++) {
            if (strcmp(groups[g][j], key) == 0)
                continue;
            for (size_t i = 0; i < s->n; i++)
                if (strcmp(s->key[i], groups[g][j]) == 0) {
                    free(s->key[i]);
                    free(s->value[i]);
                    for (size_t k = i + 1; k < s->n; k++) { /* keep the order */
                        s->key[k - 1] = s->key[k];
                        s->value[k - 1] = s->value[k];
                    }
                    s->n--;
                    break;
                }
        }
    }
}

qc_status qc_settings_copy(const qc_settings *s, qc_settings **out)
{
    qc_status st = qc_settings_alloc(out);
    for (size_t i = 0; st == QC_OK && i < s->n; i++)
        st = qc_settings_set(*out, s->key[i], s->value[i]);
    if (st != QC_OK) {
        qc_settings_free(*out);
        *out = NULL;
    }
    return st;
}

/* Check a value against its key's kind; the message describes the value. */
static qc_status check_value(const char *key, const char *value)
{
    const key_spec *k = find_key(key);
    double d;
    size_t z, n;
    double *list;
    qc_status st;
    if (!k) /* a model parameter: a finite number */
        return qc_parse_double(value, &d);
    switch (k->kind) {
    case K_TEXT:
        if (value[0] == '\0')
            return qc_fail(QC_EINVAL, "empty value");
        if (strcmp(key, "fec") == 0) {
            qc_fec f;
            return qc_fec_parse(value, &f);
        }
        if (strcmp(key, "shaping") == 0) {
            qc_shaping sh;
            return qc_shaping_parse(value, &sh);
        }
        if (strcmp(key, "model") == 0 && !qc_model_type_find(value)) {
            char known[512] = "";
            const qc_model_type *const *types = qc_model_types();
            for (size_t t = 0; types[t]; t++) {
                strncat(known, t ? ", " : "", sizeof known - strlen(known) - 1);
                strncat(known, types[t]->name, sizeof known - strlen(known) - 1);
            }
            return qc_fail(QC_EINVAL, "unknown model '%s' (known: %s)", value, known);
        }
        return QC_OK;
    case K_NUMBER:
        st = qc_parse_double(value, &d);
        if (st != QC_OK)
            return st;
        if (strcmp(key, "tol") == 0 && !(d > 0.0))
            return qc_fail(QC_EINVAL, "tolerance must be > 0 (got %g)", d);
        /* a certificate looser than 0.01 bit says nothing a design can use:
         * the rate's own differences between bits are of that order */
        if (strcmp(key, "tol") == 0 && d > 0.01)
            return qc_fail(QC_EINVAL, "tolerance must be at most 0.01 bit (got %g)", d);
        /* RIN is a power ratio per hertz far below 1: a value above
         * -60 dB/Hz (the noisiest lasers are near -110, common practice)
         * is a slip such as a missing minus sign, not a laser */
        if (strcmp(key, "rin-db-hz") == 0 && !(d <= -60.0))
            return qc_fail(QC_EINVAL, "relative intensity noise must be at most -60 dB/Hz "
                                      "(lasers: about -110 to -160; got %g: a missing minus?)",
                           d);
        if (strcmp(key, "error-rate") == 0 && !(d > 0.0 && d < 1.0))
            return qc_fail(QC_EINVAL, "must lie strictly between 0 and 1 (got %g)", d);
        if (k->dmin == 0.0 && k->dmax == 0.0)
            return QC_OK;
        if (k->min_exclusive ? !(d > k->dmin) : !(d >= k->dmin))
            return qc_fail(QC_EINVAL, "must be %s %g (got %g)", k->min_exclusive ? ">" : ">=",
                           k->dmin, d);
        if (!(d <= k->dmax))
            return qc_fail(QC_EINVAL, "must be <= %g (got %g)", k->dmax, d);
        return QC_OK;
    case K_WHOLE:
        return qc_parse_size(value, k->lo, k->hi, &z);
    case K_LIST:
        if (strcmp(key, "taps") == 0 && strchr(value, 'j')) { /* complex taps a+bj */
            double re[QC_ISI_MAX_TAPS], im[QC_ISI_MAX_TAPS];
            int cplx;
            return qc_isi_taps_parse(value, re, im, &n, &cplx);
        }
        st = qc_parse_list(value, &list, &n);
        free(list);
        return st;
    case K_SWITCH:
        if (strcmp(value, "true") != 0 && strcmp(value, "false") != 0)
            return qc_fail(QC_EINVAL, "'%s' is not true or false", value);
        return QC_OK;
    case K_CHOICE: {
        size_t len = strlen(value);
        for (const char *c = k->choices; *c;) {
            const char *comma = strchr(c, ',');
            size_t cl = comma ? (size_t)(comma - c) : strlen(c);
            if (cl == len && strncmp(c, value, len) == 0)
                return QC_OK;
            c += cl + (comma != NULL);
        }
        return qc_fail(QC_EINVAL, "unknown value '%s' (expected one of: %s)", value, k->choices);
    }
    }
    return QC_OK;
}

qc_status qc_settings_set(qc_settings *s, const char *key, const char *value)
{
    if (!key || !value)
        return qc_fail(QC_EINVAL, "missing key or value");
    if (!qc_setting_known(key)) {
        const char *now = qc_setting_renamed(key);
        if (now)
            return qc_fail(QC_EINVAL, "unknown key '%s' (renamed: did you mean '%s'?)", key, now);
        const char *near = qc_setting_suggest(key);
        if (near)
            return qc_fail(QC_EINVAL, "unknown key '%s' (did you mean '%s'?)", key, near);
        return qc_fail(QC_EINVAL, "unknown key '%s'", key);
    }
    if (strlen(value) > VALUE_MAX)
        return qc_fail(QC_EINVAL, "value longer than %d characters", VALUE_MAX);
    qc_status st = check_value(key, value);
    if (st != QC_OK)
        return st;
    char *v = strdup(value);
    if (!v)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < s->n; i++)
        if (strcmp(s->key[i], key) == 0) {
            free(s->value[i]);
            s->value[i] = v;
            return QC_OK;
        }
    if (s->n == MAX_ENTRIES) {
        free(v);
        return qc_fail(QC_EINVAL, "too many settings (at most %d)", MAX_ENTRIES);
    }
    char *k = strdup(key);
    if (!k) {
        free(v);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    s->key[s->n] = k;
    s->value[s->n] = v;
    s->n++;
    return QC_OK;
}

const char *qc_settings_get(const qc_settings *s, const char *key)
{
    for (size_t i = 0; i < s->n; i++)
        if (strcmp(s->key[i], key) == 0)
            return s->value[i];
    return NULL;
}

qc_status qc_settings_number(const qc_settings *s, const char *key, double fallback,
                             double *out)
{
    const char *v = qc_settings_get(s, key);
    *out = fallback;
    if (!v)
        return QC_OK;
    qc_status st = qc_parse_double(v, out);
    return st == QC_OK ? st : qc_fail(st, "%s: %s", key, qc_last_error());
}
