/* scale_limit.h — choosing the scale limit T of a run and building the
 * neighbour graph at it (DESIGN §3; private to the library).
 *
 * A given T is kept when the complex up to it fits the budget, else refused
 * with the size it would have and a T that fits. Auto takes the full scale
 * when the complex up to it fits, else the largest scale that fits, to a
 * relative 1e-4. The budget is a simplex count (opt->max_simplices) and a
 * memory size (opt->budget_bytes); no probe holds more than the budget.
 */
#ifndef NERVEGAP_SCALE_LIMIT_H
#define NERVEGAP_SCALE_LIMIT_H

#include "nervegap/complex.h"
#include "nervegap/kdtree.h"
#include "nervegap/run.h"
#include "nervegap/values.h"

typedef struct ng_scale_choice {
    double scale_limit;    /* T */
    double full_scale;     /* NaN when not computed */
    int limited_by_budget; /* auto chose T below the full scale */
    ng_complex_size size;  /* the complex at T */
} ng_scale_choice;

/* Chooses T for the run (L filtrations) and builds the graph of the pairs
 * with Rips edge value ≤ T into *graph (caller frees with ng_csr_free). On
 * failure *graph is zeroed: NG_ERR_BUDGET when a given T does not fit (the
 * message says how large it would be and which T would fit) or no scale
 * fits, NG_ERR_NOMEM. */
int ng_scale_limit_choose(const ng_space *s, const ng_run_options *opt, int L,
                          ng_scale_choice *out, ng_csr *graph, ng_error *err);

/* Every ball at the full scale holds one common sample point: min over
 * sample points c of max_i τ_i(d(x_c, x_i)). O(n²) at worst. */
double ng_scale_limit_full(const ng_space *s, int threads);

#endif
