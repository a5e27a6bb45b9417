/* intensity_link.c — the power budget of an unamplified point-to-point
 * intensity link: received power = launch power − fibre loss α·L −
 * connector and splice losses − the penalty budget, all in dB (the link
 * power budget of Agrawal, Fiber-Optic Communication Systems, 4th ed.,
 * Wiley 2010, sec. 5.2; section from memory). The received power then feeds the PIN/APD or
 * photon-counting front end (frontend.c). */
#include "core/internal.h"
#include "quantcap/frontend.h"

#include <math.h>

void qc_intensity_link_default(qc_intensity_link *l)
{
    l->launch_dbm = NAN;
    l->length_km = 0.0;
    l->loss_db_km = 0.2; /* standard single-mode fibre at 1550 nm (common practice) */
    l->connector_loss_db = 0.0;
    l->splice_loss_db = 0.0;
    l->penalty_db = 0.0;
}

static qc_status nonneg(const char *name, double v, const char *unit)
{
    if (!isfinite(v) || !(v >= 0.0))
        return qc_fail(QC_EINVAL, "'%s' must be >= 0%s and finite (got %g)", name, unit, v);
    return QC_OK;
}

qc_status qc_intensity_link_received(const qc_intensity_link *l, double *received_dbm,
                                     double *loss_db)
{
    if (!l)
        return qc_fail(QC_EINVAL, "no intensity link given");
    if (isnan(l->launch_dbm))
        return qc_fail(QC_EINVAL, "'launch-dbm' is required for the fibre link");
    if (!isfinite(l->launch_dbm))
        return qc_fail(QC_EINVAL, "'launch-dbm' must be a finite number of dBm (got %g)",
                       l->launch_dbm);
    qc_status st;
    if ((st = nonneg("length-km", l->length_km, " km")) != QC_OK ||
        (st = nonneg("loss-db-km", l->loss_db_km, " dB/km")) != QC_OK ||
        (st = nonneg("connector-loss-db", l->connector_loss_db, " dB")) != QC_OK ||
        (st = nonneg("splice-loss-db", l->splice_loss_db, " dB")) != QC_OK ||
        (st = nonneg("penalty-db", l->penalty_db, " dB")) != QC_OK)
        return st;
    double fibre = l->loss_db_km * l->length_km;
    double loss = fibre + l->connector_loss_db + l->splice_loss_db + l->penalty_db;
    if (loss > QC_LINK_MAX_LOSS_DB)
        return qc_fail(QC_EINVAL, "the link loses %g dB (fibre %g km x %g dB/km = %g dB, "
                                  "connectors %g dB, splices %g dB, penalties %g dB): more "
                                  "than the %g dB any photodiode receiver is seen behind",
                       loss, l->length_km, l->loss_db_km, fibre, l->connector_loss_db,
                       l->splice_loss_db, l->penalty_db, QC_LINK_MAX_LOSS_DB);
    *received_dbm = l->launch_dbm - loss;
    *loss_db = loss;
    return QC_OK;
}
