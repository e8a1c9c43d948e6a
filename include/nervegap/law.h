/* law.h — growth laws (DESIGN §2.2): how the ball of a point with base
 * radius rho grows with the scale t, when the point is born, and when its
 * ball first reaches a distance s.
 *
 *   law      r(t)                  birth b    reach time tau(s)
 *   scaled   t·rho                 0          s/rho
 *   shifted  t − rho  (t ≥ rho)    rho        s + rho
 *   power    sqrt(t² − rho²)       rho        sqrt(s² + rho²)
 */
#ifndef NERVEGAP_LAW_H
#define NERVEGAP_LAW_H

#include "nervegap/common.h"

typedef enum ng_law {
    NG_LAW_SCALED = 0,
    NG_LAW_SHIFTED = 1,
    NG_LAW_POWER = 2
} ng_law;

/* Parses "scaled", "shifted" or "power"; NG_ERR_USAGE naming --law else. */
NG_API int ng_law_parse(const char *text, ng_law *out, ng_error *err);

/* The name of a law as written in files and messages. */
NG_API const char *ng_law_name(ng_law law);

/* Vertex birth b of a point with base radius rho. */
NG_API double ng_law_birth(ng_law law, double rho);

/* Ball radius r(t) for t ≥ birth (0 before the birth under shifted/power). */
NG_API double ng_law_radius(ng_law law, double rho, double t);

/* Reach time tau(s) = min{t ≥ b : r(t) ≥ s}, s ≥ 0. Under scaled with
 * rho = 0 it is +inf for s > 0 and 0 for s = 0. */
NG_API double ng_law_reach(ng_law law, double rho, double s);

#endif
