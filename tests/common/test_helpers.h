/* test_helpers.h — absolute-tolerance comparison of doubles for cmocka
 * tests (cmocka's assert_float_equal works in float). Include after
 * cmocka.h. */
#ifndef QC_TEST_ASSERT_NEAR_H
#define QC_TEST_ASSERT_NEAR_H

#include <math.h>

#define assert_near(a, b, tol)                                                  \
    do {                                                                        \
        double a_ = (a), b_ = (b), t_ = (tol);                                  \
        if (!(fabs(a_ - b_) <= t_))                                             \
            fail_msg("%s = %.17g, expected %.17g (tolerance %g)", #a, a_, b_,   \
                     t_);                                                       \
    } while (0)

#endif
