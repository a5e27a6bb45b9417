/* embed_design.c — quantcap embedded in another program: design the
 * MI-optimal 3-bit quantizer for PAM-4 levels in Gaussian noise, rate it,
 * and print the thresholds and the rate with its certificate.
 *
 * Build against an installed quantcap:
 *   cc embed_design.c $(pkg-config --cflags --libs quantcap) -o embed_design
 * Invented operating point: noise standard deviation 0.5 on levels
 * -3, -1, 1, 3. */
#include <quantcap.h>

#include <stdio.h>

int main(void)
{
    const qc_model_type *gauss = qc_model_type_find("gauss");
    if (!gauss) {
        fprintf(stderr, "embed_design: model 'gauss' not found\n");
        return 1;
    }
    double params[QC_MODEL_MAX_PARAMS] = {0.5}; /* sigma, in level units */
    qc_model *model = NULL;
    qc_status st = qc_model_alloc(gauss, params, &model);
    if (st != QC_OK) {
        fprintf(stderr, "embed_design: %s\n", qc_last_error());
        return 1;
    }

    const double levels[] = {-3.0, -1.0, 1.0, 3.0};
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = model;
    req.channel.levels = levels;
    req.channel.nlevels = 4;
    req.quantizer.cells = 8; /* 3 bits */

    qc_design_result res = {0};
    st = qc_design(&req, &res);
    if (st != QC_OK) {
        fprintf(stderr, "embed_design: %s\n", qc_last_error());
        qc_model_free(model);
        return 1;
    }
    printf("quantcap %s: PAM-4, %s %g (level units), %zu cells\n", qc_version(),
           qc_model_get_type(model)->params[0].name, qc_model_param(model, 0), res.cells);
    printf("thresholds:");
    for (size_t i = 0; i < res.nthresholds; i++)
        printf(" %.4f", res.thresholds[i]);
    printf(" (level units)\n");
    printf("rate %.6f bit/symbol (exact finite sum), unquantized %.6f bit/symbol, "
           "loss %.6f bit/symbol\n",
           res.rate_bits, res.unquantized_bits, res.loss_bits);
    qc_design_result_clear(&res);
    qc_model_free(model);
    return 0;
}
