/* cech.c — Čech values of one simplex (DESIGN §2.3): the first scale t at
 * which the balls of its vertices have a common point, under the growth
 * laws of §2.2. Euclidean (exact, from pairwise distances only), one-
 * dimensional intervals (the chebyshev and manhattan-in-the-plane paths)
 * and the intrinsic value of a finite metric space.
 *
 * Invariant of every kernel: the value returned is a scale at which a
 * common point exists (up to the feasibility tolerance below), and it is
 * never below max_i b_i.
 *
 * How the euclidean kernel works
 * ------------------------------
 * Write R_i(t) = r_i(t)² for the squared ball radius. cech(σ) is the least t
 * for which some y has |y − x_i|² ≤ R_i(t) and t ≥ b_i for every i ∈ σ, i.e.
 * the minimum of the convex function f(y) = max_i tau_i(|y − x_i|).
 *
 * 1. Support sets. At a minimiser y* either y* = x_i for an active i (then
 *    t* = b_i), or every active tau_i is differentiable there with gradient
 *    a positive multiple of y* − x_i; 0 lies in the convex hull of those
 *    gradients, so y* lies in the convex hull of the active centres and, by
 *    Carathéodory, of an affinely independent subset B = {b0, b1..bk} on
 *    which all constraints are tight.
 * 2. Tight system in Gram coordinates. Put y = x_b0 + Σ_a μ_a (x_ba − x_b0)
 *    and G_ac = ½(d_0a² + d_0c² − d_ac²) (only pairwise distances: the
 *    ambient dimension never enters). Subtracting the b0 equation from the
 *    others gives G μ = ½(diag G − (R_b(t) − R_0(t))), and R_b − R_0 is
 *    (ρ_b² − ρ_0²)·t² (scaled), −2(ρ_b − ρ_0)·t + ρ_b² − ρ_0² (shifted) or
 *    ρ_0² − ρ_b² (power). So μ = μ0 + u·μ1 with u = t² (scaled) or t
 *    (shifted), and the b0 equation μᵀGμ = R_0(t) is one quadratic
 *    A u² + 2 Bc u + C = R_0 with A = μ1ᵀGμ1, Bc = μ0ᵀGμ1, C = μ0ᵀGμ0
 *    (read off the right-hand sides, no extra products); under power it is
 *    directly t² = C + ρ_0². Singletons give y = x_i; pairs are solved in
 *    closed form on the segment (the Rips edge value of values.c).
 * 3. Candidates. Every root gives a point y and a scale t; it is evaluated
 *    at t' = max(t, max_i b_i) (radii only grow, and t* ≥ max_i b_i, so
 *    this loses nothing) and kept when every vertex j of σ satisfies
 *    |y − x_j|² ≤ R_j(t') + tol, with |y − x_j|² from barycentric
 *    coordinates β of y on B by the distance identity
 *    |y − x_j|² = Σ_b β_b d_bj² − Σ_{b<c} β_b β_c d_bc².
 *    Every kept candidate is a feasible point, so its t' ≥ t*; the optimum
 *    itself is a candidate (step 1). Hence cech = the least kept t'.
 *    Only a loose sign test is used: roots with Σ|β| > BETA_MAX = 4 are
 *    dropped (the optimum has β ≥ 0, Σ|β| = 1; far outside conv B the
 *    distance identity cancels). A strict KKT test (β ≥ 0) would save
 *    little, since the feasibility test is cheap next to the solve, and a
 *    sign near 0 flipped by rounding would lose the optimum, whereas the
 *    minimum over feasible candidates stays exact.
 * 4. Speed. rips(σ) = the largest singleton/pair value is a lower bound of
 *    cech; as soon as a kept candidate reaches it the search stops (most
 *    obtuse triangles stop after the pairs). Candidates not below the best
 *    kept one are not tested. Sizes 2, 3, 4 get their own inlined copy of
 *    the loop with the size a compile-time constant.
 *
 * Tolerances (all relative to the simplex's own scale, so coordinates from
 * 1e-8 to 1e8 behave alike):
 *  - Precision: the Gram entries ½(d_0a² + d_0c² − d_ac²) and the
 *    elimination cancel like 1/sin² of the flattest angle of B, so the
 *    support systems are solved in long double (64-bit mantissa on x86-64;
 *    where long double is double, flat supports lose accuracy as 1/sin²).
 *    The candidate point is then tested in double.
 *  - Flatness: B is skipped when a Cholesky pivot of G falls below
 *    FLAT_TOL·G_aa = 1e-12·G_aa, or the product of those ratios (det G /
 *    Π G_aa) below 1e-12, i.e. when some x_ba lies within ~1e-6 (relative
 *    to its distance from x_b0) of the affine hull of the others: B is then
 *    affinely dependent to working precision, and a lower-dimensional
 *    support carries the optimum within the feasibility margin below.
 *  - Feasibility: tol = FEAS_TOL·(diam² + max_j |y − x_j|²) plus, under
 *    shifted and power, 16 eps·(t'² + ρ_max²) for the rounding of R_j.
 *    FEAS_TOL = 1e-10 leaves 1e6 ulps for the cancellation in the distance
 *    identity. Accepting a point that violates a ball by tol moves the
 *    value by at most tol/(2 r_j(t)·r_j'(t)) — relative 5e-11·diam²/r_j² —
 *    so the result is exact to ~1e-10 relative except for balls far
 *    smaller than the simplex.
 * Law scaled with ρ_z = 0 is a ball that never grows (tau = +inf off x_z):
 * y must be x_z, handled before the search.
 * If, through rounding, no candidate passes, the value falls back to
 * min_i f(x_i), which is always feasible (an upper bound, never reached in
 * the reference tests).
 */
#include "cech.h"

#include <float.h>
#include <math.h>

#if defined(__GNUC__) || defined(__clang__)
#define ALWAYS_INLINE inline __attribute__((always_inline))
#else
#define ALWAYS_INLINE inline
#endif

#define MAXV NG_SIMPLEX_MAX_VERTICES
#define FLAT_TOL 1e-12
#define FEAS_TOL 1e-10
#define DISC_TOL 1e-12
#define BETA_MAX 4.0

/* The support systems are solved in extended precision where the platform
 * has it (x86-64: 64-bit mantissa): the Gram entries and the elimination
 * cancel like 1/sin² of the flattest angle of B. */
typedef long double real;

/* Squared radius R(t) = r(t)² (0 before the birth). */
static ALWAYS_INLINE double sq_radius(ng_law law, double rho, double t)
{
    switch (law) {
    case NG_LAW_SCALED: return (rho * t) * (rho * t);
    case NG_LAW_SHIFTED: return t > rho ? (t - rho) * (t - rho) : 0.0;
    case NG_LAW_POWER: return t > rho ? (t - rho) * (t + rho) : 0.0;
    }
    return 0.0;
}

/* Radius r(t). */
static ALWAYS_INLINE double radius(ng_law law, double rho, double t)
{
    switch (law) {
    case NG_LAW_SCALED: return rho * t;
    case NG_LAW_SHIFTED: return t > rho ? t - rho : 0.0;
    case NG_LAW_POWER: return t > rho ? sqrt((t - rho) * (t + rho)) : 0.0;
    }
    return 0.0;
}

/* Reach time tau(s) = min{t ≥ b : r(t) ≥ s}. */
static ALWAYS_INLINE double reach(ng_law law, double rho, double s)
{
    switch (law) {
    case NG_LAW_SCALED:
        if (s == 0.0) return 0.0;
        return rho > 0.0 ? s / rho : INFINITY;
    case NG_LAW_SHIFTED: return s + rho;
    case NG_LAW_POWER: return hypot(s, rho);
    }
    return INFINITY;
}

/* First t ≥ max(b_a, b_b) at which r_a(t) + r_b(t) ≥ gap, gap ≥ 0: two
 * balls (or intervals) of centres gap apart meet. Derived on its own here
 * (power: with p, q the two radii, p + q = gap and p² − q² = b² − a² give
 * q = (gap² − (hi² − lo²))/(2 gap) and t² = hi² + q²). */
static ALWAYS_INLINE double meet_time(ng_law law, double a, double b,
                                      double gap)
{
    double hi = a > b ? a : b, lo = a > b ? b : a;
    switch (law) {
    case NG_LAW_SCALED:
        if (gap == 0.0) return 0.0;
        return a + b > 0.0 ? gap / (a + b) : INFINITY;
    case NG_LAW_SHIFTED: {
        double t = 0.5 * (gap + a + b);
        return t > hi ? t : hi;
    }
    case NG_LAW_POWER: {
        double need = (hi - lo) * (hi + lo); /* r_lo(hi)² */
        if (gap * gap <= need) return hi;
        double q = (gap * gap - need) / (2.0 * gap);
        return hypot(hi, q);
    }
    }
    return INFINITY;
}

/* The search state of one euclidean evaluation. */
typedef struct search {
    ng_law law;
    int m;
    const double *d2;   /* m × m squared distances */
    const double *rho;
    double birth_max;   /* max_i b_i */
    double diam2;       /* max squared distance */
    double rho_max;
    double best;        /* least kept candidate so far */
} search;

/* Tests the point y = Σ_b beta[b] x_{idx[b]} (nb points, Σ beta = 1) at
 * scale max(t, birth_max) and keeps it when feasible. */
static ALWAYS_INLINE void try_point(search *s, const int m, int nb,
                                    const int *idx, const double *beta,
                                    double t)
{
    if (!(t >= s->birth_max)) {
        if (t != t) return; /* NaN */
        t = s->birth_max;
    }
    if (!(t < s->best)) return;
    const double *d2 = s->d2;
    double w = 0.0; /* Σ_{b<c} β_b β_c d_bc² */
    for (int b = 0; b < nb; b++)
        for (int c = b + 1; c < nb; c++)
            w += beta[b] * beta[c] * d2[idx[b] * m + idx[c]];
    double dist[MAXV];
    double dmax = 0.0;
    for (int j = 0; j < m; j++) {
        double acc = -w;
        for (int b = 0; b < nb; b++) acc += beta[b] * d2[idx[b] * m + j];
        dist[j] = acc;
        if (acc > dmax) dmax = acc;
    }
    double tol = FEAS_TOL * (s->diam2 + dmax);
    if (s->law != NG_LAW_SCALED)
        tol += 16.0 * DBL_EPSILON * (t * t + s->rho_max * s->rho_max);
    for (int j = 0; j < m; j++)
        if (!(dist[j] <= sq_radius(s->law, s->rho[j], t) + tol)) return;
    s->best = t;
}

/* Solves the tight system of the support B = {idx[0..nb-1]} (nb ≥ 3) in
 * extended precision and tries its roots. */
static ALWAYS_INLINE void try_support(search *s, const int m, const int nb,
                                      const int *idx)
{
    const int k = nb - 1;
    const double *d2 = s->d2, *rho = s->rho;
    const int o = idx[0];
    const real rho0 = rho[o];
    real g[MAXV - 1][MAXV - 1], l[MAXV - 1][MAXV - 1];
    real r0[MAXV - 1], r1[MAXV - 1];
    for (int a = 0; a < k; a++) {
        int ia = idx[a + 1];
        for (int c = 0; c < a; c++) {
            int ic = idx[c + 1];
            g[a][c] = 0.5L * (((real)d2[o * m + ia] + d2[o * m + ic]) -
                              d2[ia * m + ic]);
        }
        g[a][a] = d2[o * m + ia];
        real ra = rho[ia];
        switch (s->law) {
        case NG_LAW_SCALED:
            r0[a] = 0.5L * g[a][a];
            r1[a] = -0.5L * (ra - rho0) * (ra + rho0);
            break;
        case NG_LAW_SHIFTED:
            r0[a] = 0.5L * (g[a][a] - (ra - rho0) * (ra + rho0));
            r1[a] = ra - rho0;
            break;
        case NG_LAW_POWER:
            r0[a] = 0.5L * (g[a][a] + (ra - rho0) * (ra + rho0));
            r1[a] = 0.0L;
            break;
        }
    }
    /* Cholesky G = L Lᵀ with the flatness test on every pivot and on
     * their product det G / Π G_aa. */
    real flat = 1.0L;
    for (int a = 0; a < k; a++) {
        for (int c = 0; c < a; c++) {
            real acc = g[a][c];
            for (int e = 0; e < c; e++) acc -= l[a][e] * l[c][e];
            l[a][c] = acc / l[c][c];
        }
        real piv = g[a][a];
        for (int e = 0; e < a; e++) piv -= l[a][e] * l[a][e];
        if (!(piv > FLAT_TOL * g[a][a])) return;
        flat *= piv / g[a][a];
        if (!(flat > FLAT_TOL)) return;
        l[a][a] = sqrtl(piv);
    }
    real m0[MAXV - 1] = {0}, m1[MAXV - 1] = {0};
    for (int a = 0; a < k; a++) { /* forward: L z = r */
        real z0 = r0[a], z1 = r1[a];
        for (int e = 0; e < a; e++) {
            z0 -= l[a][e] * m0[e];
            z1 -= l[a][e] * m1[e];
        }
        m0[a] = z0 / l[a][a];
        m1[a] = z1 / l[a][a];
    }
    for (int a = k - 1; a >= 0; a--) { /* backward: Lᵀ μ = z */
        real z0 = m0[a], z1 = m1[a];
        for (int e = a + 1; e < k; e++) {
            z0 -= l[e][a] * m0[e];
            z1 -= l[e][a] * m1[e];
        }
        m0[a] = z0 / l[a][a];
        m1[a] = z1 / l[a][a];
    }
    real cc = 0.0L, bc = 0.0L, aa = 0.0L;
    for (int a = 0; a < k; a++) {
        cc += m0[a] * r0[a];
        bc += m0[a] * r1[a];
        aa += m1[a] * r1[a];
    }
    real roots[2];
    double ts[2];
    int nroots = 0;
    if (s->law == NG_LAW_POWER) {
        roots[0] = 0.0L;
        ts[0] = (double)sqrtl(cc + rho0 * rho0);
        nroots = 1;
    } else {
        real qa, qb, qc; /* qa u² + qb u + qc = 0 */
        if (s->law == NG_LAW_SCALED) {
            qa = aa;
            qb = 2.0L * bc - rho0 * rho0;
            qc = cc;
        } else {
            qa = aa - 1.0L;
            qb = 2.0L * (bc + rho0);
            qc = cc - rho0 * rho0;
        }
        real disc = qb * qb - 4.0L * qa * qc;
        if (disc < 0.0L) {
            if (disc < -DISC_TOL * (qb * qb + fabsl(4.0L * qa * qc))) return;
            disc = 0.0L;
        }
        real sq = sqrtl(disc);
        real q = -0.5L * (qb + (qb < 0.0L ? -sq : sq));
        if (q != 0.0L) {
            roots[nroots++] = qc / q;
            if (qa != 0.0L) roots[nroots++] = q / qa;
        } else if (qa != 0.0L) {
            roots[nroots++] = 0.0L; /* qb = 0 = disc, hence qc = 0 */
        }
        for (int r = 0; r < nroots; r++) {
            real u = roots[r];
            if (s->law == NG_LAW_SCALED)
                ts[r] = u >= 0.0L ? (double)sqrtl(u) : NAN;
            else
                ts[r] = (double)u;
        }
    }
    for (int r = 0; r < nroots; r++) {
        double t = ts[r];
        if (!(t == t) || !(fmax(t, s->birth_max) < s->best)) continue;
        double beta[MAXV];
        real sum = 0.0L, sumabs = 0.0L;
        for (int a = 0; a < k; a++) {
            real mu = m0[a] + roots[r] * m1[a];
            beta[a + 1] = (double)mu;
            sum += mu;
            sumabs += fabsl(mu);
        }
        beta[0] = (double)(1.0L - sum);
        sumabs += fabsl(1.0L - sum);
        /* The optimum has β ≥ 0 (step 1); far outside conv B the distance
         * identity would cancel badly, so such roots are dropped. */
        if (!(sumabs <= BETA_MAX)) continue;
        try_point(s, m, nb, idx, beta, t);
    }
}

/* The whole search for a given size m (a compile-time constant where it is
 * inlined). */
static ALWAYS_INLINE double euclid_search(ng_law law, const int m,
                                          const double *restrict d2,
                                          const double *restrict rho)
{
    search s;
    s.law = law;
    s.m = m;
    s.d2 = d2;
    s.rho = rho;
    s.birth_max = 0.0;
    s.diam2 = 0.0;
    s.rho_max = 0.0;
    s.best = INFINITY;
    int zero = -1; /* a vertex that never grows (scaled, rho = 0) */
    for (int i = 0; i < m; i++) {
        double b = ng_law_birth(law, rho[i]);
        if (b > s.birth_max) s.birth_max = b;
        if (rho[i] > s.rho_max) s.rho_max = rho[i];
        for (int j = i + 1; j < m; j++)
            if (d2[i * m + j] > s.diam2) s.diam2 = d2[i * m + j];
        if (law == NG_LAW_SCALED && !(rho[i] > 0.0) && zero < 0) zero = i;
    }
    if (zero >= 0) { /* y = x_zero is forced */
        double t = 0.0;
        for (int j = 0; j < m; j++) {
            double tj = reach(law, rho[j], sqrt(d2[zero * m + j]));
            if (tj > t) t = tj;
        }
        return t;
    }
    if (m == 1) return s.birth_max;
    if (m == 2) { /* two balls that meet pairwise meet: cech = rips */
        double t = meet_time(law, rho[0], rho[1], sqrt(d2[1]));
        return t > s.birth_max ? t : s.birth_max;
    }

    /* Singletons: y = x_i. */
    for (int i = 0; i < m; i++) {
        int idx[1] = {i};
        double beta[1] = {1.0};
        try_point(&s, m, 1, idx, beta, s.birth_max);
    }
    /* Pairs: y on the segment where the two spheres touch. */
    double lower = s.birth_max; /* rips(σ) ≤ cech(σ) */
    for (int i = 0; i < m; i++) {
        for (int j = i + 1; j < m; j++) {
            double dd = d2[i * m + j];
            if (!(dd > 0.0)) continue;
            double d = sqrt(dd);
            double t = meet_time(law, rho[i], rho[j], d);
            if (t > lower) lower = t;
            double bi = ng_law_birth(law, rho[i]), bj = ng_law_birth(law, rho[j]);
            if (!(t > bi && t > bj)) continue; /* a singleton covers it */
            double mu = radius(law, rho[i], t) / d;
            int idx[2] = {i, j};
            double beta[2] = {1.0 - mu, mu};
            try_point(&s, m, 2, idx, beta, t);
        }
    }
    if (s.best <= lower) return s.best;

    /* Supports of 3..m points. */
    for (unsigned mask = 1; mask < (1u << m); mask++) {
        int idx[MAXV], nb = 0;
        for (int i = 0; i < m; i++)
            if (mask & (1u << i)) idx[nb++] = i;
        if (nb < 3) continue;
        try_support(&s, m, nb, idx);
        if (s.best <= lower) return s.best;
    }
    if (s.best < INFINITY) return s.best;

    /* Fallback (rounding only): the best sample centre. */
    for (int i = 0; i < m; i++) {
        double t = 0.0;
        for (int j = 0; j < m; j++) {
            double tj = reach(law, rho[j], sqrt(d2[i * m + j]));
            if (tj > t) t = tj;
        }
        if (t < s.best) s.best = t;
    }
    return s.best;
}

double ng_cech_euclid(ng_law law, int m, const double *restrict sqdist,
                      const double *restrict rho)
{
    switch (m) {
    case 1: return ng_law_birth(law, rho[0]);
    case 2: return euclid_search(law, 2, sqdist, rho);
    case 3: return euclid_search(law, 3, sqdist, rho);
    case 4: return euclid_search(law, 4, sqdist, rho);
    default: return euclid_search(law, m, sqdist, rho);
    }
}

double ng_cech_interval(ng_law law, int m, const double *restrict center,
                        const double *restrict rho)
{
    /* Helly in one dimension: intervals that meet pairwise meet jointly, so
     * max_i lo_i(t) ≤ min_j hi_j(t) holds as soon as every pair i, j with
     * c_i ≥ c_j has c_i − r_i(t) ≤ c_j + r_j(t). */
    double t = 0.0;
    for (int i = 0; i < m; i++) {
        double b = ng_law_birth(law, rho[i]);
        if (b > t) t = b;
    }
    for (int i = 0; i < m; i++) {
        for (int j = 0; j < m; j++) {
            double gap = center[i] - center[j];
            if (!(gap > 0.0)) continue;
            double tij = meet_time(law, rho[i], rho[j], gap);
            if (tij > t) t = tij;
        }
    }
    return t;
}

double ng_cech_given(ng_law law, int m, const ng_index *restrict v, size_t n,
                     const double *restrict dist,
                     const double *restrict rho_all)
{
    double best = INFINITY;
    for (size_t y = 0; y < n; y++) {
        const double *row = dist + y * n;
        double f = 0.0;
        for (int i = 0; i < m && f < best; i++) {
            double ti = reach(law, rho_all[v[i]], row[v[i]]);
            if (ti > f) f = ti;
        }
        if (f < best) best = f;
    }
    return best;
}
