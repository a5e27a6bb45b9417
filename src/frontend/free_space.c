/* free_space.c — a free-space optical link by the range equation with
 * diffraction-limited apertures (far field): P_r = P_t·G_t·G_r·(λ/(4πR))²
 * ·losses, G = (πD/λ)² for a uniformly illuminated circular aperture of
 * diameter D, i.e. P_r = P_t·(π·D_t·D_r/(4·λ·R))²·losses (Friis,
 * Proc. IRE 34(5), 1946; the aperture gain as in Goodman, Introduction to
 * Fourier Optics, 3rd ed., 2005, ch. 4). Background light from a
 * spectral radiance L_λ over the receive aperture, a full field of view θ
 * and a filter bandwidth Δλ: P_b = L_λ·A_r·π(θ/2)²·Δλ (small angles). */
#include "core/internal.h"
#include "quantcap/frontend.h"

#include <math.h>

#define PI_VALUE 3.14159265358979323846

void qc_free_space_link_default(qc_free_space_link *l)
{
    l->transmit_dbm = NAN;
    l->range_km = NAN;
    l->wavelength_nm = NAN;
    l->tx_aperture_m = NAN;
    l->rx_aperture_m = NAN;
    l->pointing_loss_db = 0.0;
    l->atmosphere_loss_db = 0.0;
    l->background_radiance = 0.0;
    l->field_of_view_mrad = NAN;
    l->filter_nm = NAN;
}

static qc_status positive(const char *name, double v, const char *unit)
{
    if (isnan(v))
        return qc_fail(QC_EINVAL, "'%s' is required for the free-space link", name);
    if (!isfinite(v) || !(v > 0.0))
        return qc_fail(QC_EINVAL, "'%s' must be > 0%s and finite (got %g)", name, unit, v);
    return QC_OK;
}

qc_status qc_free_space_link_eval(const qc_free_space_link *l, qc_free_space_result *res)
{
    if (!l)
        return qc_fail(QC_EINVAL, "no free-space link given");
    if (isnan(l->transmit_dbm))
        return qc_fail(QC_EINVAL, "'launch-dbm' (the transmit power) is required for the "
                                  "free-space link");
    if (!isfinite(l->transmit_dbm))
        return qc_fail(QC_EINVAL, "'launch-dbm' must be a finite number of dBm (got %g)",
                       l->transmit_dbm);
    qc_status st;
    if ((st = positive("range-km", l->range_km, " km")) != QC_OK ||
        (st = positive("wavelength-nm", l->wavelength_nm, " nm")) != QC_OK ||
        (st = positive("tx-aperture-m", l->tx_aperture_m, " m")) != QC_OK ||
        (st = positive("rx-aperture-m", l->rx_aperture_m, " m")) != QC_OK)
        return st;
    if (!isfinite(l->pointing_loss_db) || !(l->pointing_loss_db >= 0.0))
        return qc_fail(QC_EINVAL, "'pointing-loss-db' must be >= 0 dB (got %g)",
                       l->pointing_loss_db);
    if (!isfinite(l->atmosphere_loss_db) || !(l->atmosphere_loss_db >= 0.0))
        return qc_fail(QC_EINVAL, "'atmosphere-loss-db' must be >= 0 dB (got %g)",
                       l->atmosphere_loss_db);
    const double lambda = l->wavelength_nm * 1e-9, r = l->range_km * 1e3;
    const double coupling = PI_VALUE * l->tx_aperture_m * l->rx_aperture_m / (4.0 * lambda * r);
    if (!(coupling < 1.0))
        return qc_fail(QC_EINVAL, "at %g km the %g m receive aperture would collect %g times "
                                  "what the %g m transmit aperture sends: the range is in the "
                                  "near field, where the far-field range equation does not "
                                  "hold",
                       l->range_km, l->rx_aperture_m, coupling * coupling, l->tx_aperture_m);
    const double geometric_db = -20.0 * log10(coupling);
    res->geometric_loss_db = geometric_db;
    res->loss_db = geometric_db + l->pointing_loss_db + l->atmosphere_loss_db;
    res->received_dbm = l->transmit_dbm - res->loss_db;
    res->background_w = 0.0;
    if (!isfinite(l->background_radiance) || !(l->background_radiance >= 0.0))
        return qc_fail(QC_EINVAL, "'background-radiance' must be >= 0 W/(m^2 sr nm) (got %g)",
                       l->background_radiance);
    if (l->background_radiance > 0.0) {
        if ((st = positive("field-of-view-mrad", l->field_of_view_mrad, " mrad")) != QC_OK ||
            (st = positive("filter-nm", l->filter_nm, " nm")) != QC_OK)
            return st;
        double half = 0.5 * l->field_of_view_mrad * 1e-3;
        double area = PI_VALUE * 0.25 * l->rx_aperture_m * l->rx_aperture_m;
        res->background_w =
            l->background_radiance * area * PI_VALUE * half * half * l->filter_nm;
    }
    return QC_OK;
}
