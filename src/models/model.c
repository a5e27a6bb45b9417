/* model.c — the noise-model interface: the registry of model types,
 * parameter checking and model instances. Each model lives in its own
 * file as a const qc_model_type table (the GSL "_type" pattern). */
#include "core/internal.h"
#include "models/model_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const qc_model_type *const registry[] = {
    &qc_model_gauss,
    &qc_model_gauss_sd,
    &qc_model_poisson,
    &qc_model_apd,
    &qc_model_apd_gauss,
    &qc_model_preamp,
    &qc_model_table,
    NULL,
};

const qc_model_type *const *qc_model_types(void) { return registry; }

const qc_model_type *qc_model_type_find(const char *name)
{
    if (!name)
        return NULL;
    for (size_t i = 0; registry[i]; i++)
        if (strcmp(registry[i]->name, name) == 0)
            return registry[i];
    return NULL;
}

int qc_model_param_index(const qc_model_type *type, const char *name)
{
    for (size_t i = 0; i < type->nparams; i++)
        if (strcmp(type->params[i].name, name) == 0)
            return (int)i;
    return -1;
}

static qc_status check_param(const qc_model_type *type, const qc_param_spec *p,
                             double v)
{
    if (isnan(v))
        return qc_fail(QC_EINVAL, "model '%s': parameter '%s' is required (%s)",
                       type->name, p->name, p->help);
    if (!isfinite(v))
        return qc_fail(QC_EINVAL, "model '%s': parameter '%s' must be finite",
                       type->name, p->name);
    if (p->min_exclusive ? !(v > p->min) : !(v >= p->min))
        return qc_fail(QC_EINVAL, "model '%s': parameter '%s' must be %s %g (got %g)",
                       type->name, p->name, p->min_exclusive ? ">" : ">=",
                       p->min, v);
    if (p->max_exclusive ? !(v < p->max) : !(v <= p->max))
        return qc_fail(QC_EINVAL, "model '%s': parameter '%s' must be %s %g (got %g)",
                       type->name, p->name, p->max_exclusive ? "<" : "<=", p->max, v);
    return QC_OK;
}

qc_status qc_model_alloc(const qc_model_type *type, const double *params,
                         qc_model **out)
{
    *out = NULL;
    qc_gsl_init();
    if (!type)
        return qc_fail(QC_EINVAL, "no model type given");
    if (type->nparams > QC_MODEL_MAX_PARAMS)
        return qc_fail(QC_EINVAL, "model '%s' has too many parameters", type->name);
    qc_model *m = calloc(1, sizeof *m);
    if (!m)
        return qc_fail(QC_ENOMEM, "out of memory");
    m->type = type;
    for (size_t i = 0; i < type->nparams; i++) {
        double v = params ? params[i] : NAN;
        if (isnan(v))
            v = type->params[i].default_value;
        qc_status st = check_param(type, &type->params[i], v);
        if (st != QC_OK) {
            free(m);
            return st;
        }
        m->params[i] = v;
    }
    qc_status st = type->check ? type->check(m->params) : QC_OK;
    if (st == QC_OK && type->init)
        st = type->init(m->params, &m->state);
    if (st != QC_OK) {
        free(m);
        return st;
    }
    *out = m;
    return QC_OK;
}

void qc_model_free(qc_model *model)
{
    if (!model)
        return;
    if (model->type->destroy)
        model->type->destroy(model->state);
    free(model);
}

const qc_model_type *qc_model_get_type(const qc_model *model) { return model->type; }

int qc_model_thread_safe(const qc_model *model) { return model->state == NULL; }

double qc_model_param(const qc_model *model, size_t i)
{
    return i < model->type->nparams ? model->params[i] : NAN;
}

const double *qc_model_params(const qc_model *model) { return model->params; }

qc_status qc_model_check_levels(const qc_model *model, const double *levels,
                                size_t nlevels)
{
    if (nlevels == 0)
        return qc_fail(QC_EINVAL, "no input levels given");
    for (size_t i = 0; i < nlevels; i++) {
        if (!isfinite(levels[i]))
            return qc_fail(QC_EINVAL, "level %zu is not a finite number", i + 1);
        if (model->type->check_level) {
            qc_status st = model->type->check_level(model, levels[i]);
            if (st != QC_OK) {
                char why[512]; /* the detail buffer is rewritten below */
                snprintf(why, sizeof why, "%s", qc_last_error());
                return qc_fail(st, "level %zu (%g): %s", i + 1, levels[i], why);
            }
        }
    }
    return QC_OK;
}

qc_status qc_model_moments(const qc_model *model, double x, double *mean,
                           double *var)
{
    if (!model)
        return qc_fail(QC_EINVAL, "no model given");
    if (!model->type->moments)
        return qc_fail(QC_EINVAL, "model '%s' has no moments", model->type->name);
    qc_status st = qc_model_check_levels(model, &x, 1);
    if (st != QC_OK)
        return st;
    return model->type->moments(model, x, mean, var);
}

double qc_model_mean_photons(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels)
{
    if (!model || !model->type->photons || !levels || nlevels == 0)
        return NAN;
    double n = 0.0;
    for (size_t i = 0; i < nlevels; i++)
        n += (input ? input[i] : 1.0 / (double)nlevels) * model->type->photons(model, levels[i]);
    return n;
}
