/* Compiled kernels for the hot loops of the cubic-EOS flash (letdown.fluid.flash.twophase).
 *
 * Plain C99 and libm. Each kernel loops over cases and reproduces, case by case, the numpy code it
 * replaces (same formulae, same order of tests, same constants -- all constants are passed in from
 * Python so that flash.py and cubic.py stay the one source of truth):
 *
 *   lf_lnphi        CubicEOS.mix + Z_roots + choose_root + lnphi
 *   lf_stability    the trial iterations of flash.stability (all trials of all cases)
 *   lf_two_phase_ss the successive-substitution loop of flash.two_phase_flash
 *   lf_split_finish the final negative-flash Rachford-Rice, phase compositions and stable-root Z of
 *                   both phases (the end of flash.two_phase_flash)
 *   lf_properties   CubicEOS.properties (residual and derivative properties of one phase)
 *   lf_flash_pt     the whole of flash.flash_TP for mixtures (phase naming by the phase
 *                   identification parameter, warm start and re-test, stability, split with its
 *                   Newton finish, Gibbs-energy acceptance, phases named by molar volume)
 *   lf_hs_of_split  CubicEngine._hs_of_split (ideal-gas h0, s0, cp0 plus residual parts)
 *   lf_phase        CubicEngine._phase (all properties of one phase)
 *   lf_assemble     the numbers of CubicEngine._assemble (whole, per phase, two-phase derivatives)
 *   lf_solve_T      the P-h / P-s temperature iteration CubicEngine._solve_T_mixture
 *
 * The functions are loaded with ctypes by letdown/fluid/native.py. The file is built as a Python
 * extension module only so that the ordinary packaging tools compile it at install time; the
 * module itself is empty.
 *
 * Parameter block `par` (built by native.py from a CubicEOS), nc components:
 *   par[0] R [J/(mol K)], par[1] delta1, par[2] delta2, par[3] relative root separation below which
 *   the two roots count as one, par[4] Newton polishing steps on each root, par[5..7] unused,
 *   then sqrt(a_c), m, sqrt(Tc), b, Tc, Pc, omega (nc each), (1 - k_ij) (nc x nc, row major) and
 *   the Peneloux shifts c (nc).
 *
 * The flash constants (block `fc`), the P-h constants (block `sv`) and the ideal-gas block `ig`
 * are laid out as the FP_*, SV_* enumerations and ig_view below; native.py fills them from
 * flash.py, cubic_fluid.py and components.py.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#ifdef LETDOWN_WITH_PYTHON_MODULE
#include <Python.h>
#endif

#ifdef _WIN32
#define LF_EXPORT __declspec(dllexport)
#else
#define LF_EXPORT __attribute__((visibility("default")))
#endif

#define HEADER 8
#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

typedef struct {
    int nc;
    double R, d1, d2, u, w, dd, distinct;
    int polish;
    const double *sqrt_ac, *ms, *sqrt_Tc, *bs, *Tcs, *Pcs, *omegas, *omk, *cs;
    /* Twu alpha parameters L, M, N per component (M = 0: Soave alpha), cubic.sqrt_alpha */
    const double *twL, *twM, *twN;
    /* 1 for a component that gets a cold trial phase in the stability test (flash.cold_trial_flags) */
    const double *cold;
    /* r_i = sqrt(a_i alpha_i(T)) of the last temperature seen (rcache[0] = T, then r; NULL: none):
     * the flash evaluates many compositions at one temperature */
    double *rcache;
} eos_t;

static eos_t eos_view(int nc, const double *par)
{
    eos_t e;
    e.nc = nc;
    e.R = par[0];
    e.d1 = par[1];
    e.d2 = par[2];
    e.u = e.d1 + e.d2;
    e.w = e.d1 * e.d2;
    e.dd = e.d1 - e.d2;
    e.distinct = par[3];
    e.polish = (int)par[4];
    e.sqrt_ac = par + HEADER;
    e.ms = e.sqrt_ac + nc;
    e.sqrt_Tc = e.ms + nc;
    e.bs = e.sqrt_Tc + nc;
    e.Tcs = e.bs + nc;
    e.Pcs = e.Tcs + nc;
    e.omegas = e.Pcs + nc;
    e.omk = e.omegas + nc;
    e.cs = e.omk + (size_t)nc * nc;
    e.twL = e.cs + nc;
    e.twM = e.twL + nc;
    e.twN = e.twM + nc;
    e.cold = e.twN + nc;
    e.rcache = NULL;
    return e;
}

/* the temperature cache of mixture(); released by eos_release */
static void eos_cache(eos_t *e)
{
    e->rcache = malloc(((size_t)e->nc + 1) * sizeof(double));
    if (e->rcache) e->rcache[0] = NAN;
}

static void eos_release(eos_t *e)
{
    free(e->rcache);
    e->rcache = NULL;
}

/* max of |v|, NaN if any element is NaN (as numpy's max) */
static double absmax(int n, const double *v)
{
    double m = 0.0;
    int i;
    for (i = 0; i < n; i++) {
        double a = fabs(v[i]);
        if (isnan(a)) return a;
        if (a > m) m = a;
    }
    return m;
}

/* Layout version of the parameter blocks; native.py refuses a library built from another one
 * (2: Twu alpha arrays appended to the EOS block). */
LF_EXPORT int lf_abi(void)
{
    return 2;
}

/* SHA-256 of this file as it was compiled (setup.py passes it in), so that a library built from
   another version of the file is detected and not used (letdown.fluid.kernels.native). */
#ifndef LETDOWN_SOURCE_SHA256
#define LETDOWN_SOURCE_SHA256 "unknown"
#endif
LF_EXPORT const char *lf_source_sha256(void)
{
    return LETDOWN_SOURCE_SHA256;
}

/* ---------------------------------------------------------------- cubic EOS (cubic.py) */
/* cubic.sqrt_alpha for component k, times sqrt(a_c): r = sqrt(a_k alpha_k(T)) and, when rp is not
 * NULL, dr/dT and d2r/dT2 (rpp may be NULL). sT = sqrt(T). */
static void alpha_r(const eos_t *e, int k, double T, double sT, double *r, double *rp, double *rpp)
{
    double M = e->twM[k];
    if (M == 0.0) {
        double m = e->ms[k], sTc = e->sqrt_Tc[k];
        *r = e->sqrt_ac[k] * (1.0 + m * (1.0 - sT / sTc));
        if (rp) *rp = -e->sqrt_ac[k] * m / (2.0 * sT * sTc);
        if (rpp) *rpp = e->sqrt_ac[k] * m / (4.0 * sT * sT * sT * sTc);
    } else {
        double L = e->twL[k], N = e->twN[k], Tr = T / e->Tcs[k], kk = M * N;
        double c1 = 0.5 * N * (M - 1.0), c2 = 0.5 * L * kk, Trk = pow(Tr, kk);
        double g = pow(Tr, c1) * exp(0.5 * L * (1.0 - Trk)), q = c1 - c2 * Trk;
        *r = e->sqrt_ac[k] * g;
        if (rp) *rp = e->sqrt_ac[k] * g * q / T;
        if (rpp) *rpp = e->sqrt_ac[k] * g / (T * T) * (q * q - q - c2 * kk * Trk);
    }
}

/* CubicEOS.mix: a, b and psi_i = sum_j x_j a_ij; work needs 2 nc doubles */
static void mixture(const eos_t *e, double T, const double *x, double *psi, double *a, double *b,
                    double *work)
{
    int nc = e->nc, i, j;
    double aa = 0.0, bb = 0.0;
    double *r = work, *xr = work + nc;
    if (e->rcache && e->rcache[0] == T) {
        r = e->rcache + 1;
    } else {
        double sT = sqrt(T);
        if (e->rcache) {
            r = e->rcache + 1;
            e->rcache[0] = T;
        }
        for (i = 0; i < nc; i++)
            alpha_r(e, i, T, sT, &r[i], NULL, NULL);
    }
    for (i = 0; i < nc; i++) {
        xr[i] = x[i] * r[i];
        psi[i] = 0.0;
    }
    /* psi_j = r_j sum_i xr_i (1 - k_ij), summed over i in order, rows read contiguously */
    for (i = 0; i < nc; i++) {
        const double *row = e->omk + (size_t)i * nc;
        double xi = xr[i];
        for (j = 0; j < nc; j++) psi[j] += xi * row[j];
    }
    for (j = 0; j < nc; j++) psi[j] *= r[j];
    for (i = 0; i < nc; i++) {
        aa += x[i] * psi[i];
        bb += x[i] * e->bs[i];
    }
    *a = aa;
    *b = bb;
}

static double newton_cubic(double Z, double c2, double c1, double c0)
{
    double f = ((Z + c2) * Z + c1) * Z + c0;
    double df = (3.0 * Z + 2.0 * c2) * Z + c1;
    double step = (df != 0.0) ? f / df : 0.0;
    return Z - step;
}

/* CubicEOS.Z_roots */
static void z_roots(const eos_t *e, double A, double B, double *Zmin_out, double *Zmax_out)
{
    double u = e->u, w = e->w;
    double c2 = -(1.0 + B - u * B);
    double c1 = A + w * B * B - u * B - u * B * B;
    double c0 = -(A * B + w * B * B + w * B * B * B);
    double p = c1 - c2 * c2 / 3.0;
    double q = 2.0 * c2 * c2 * c2 / 27.0 - c2 * c1 / 3.0 + c0;
    double disc = (q / 2.0) * (q / 2.0) + (p / 3.0) * (p / 3.0) * (p / 3.0);
    double shift = -c2 / 3.0;
    double Zmin, Zmax;
    int k;
    if (disc > 0.0) {
        double sq = sqrt(disc);
        double t1 = cbrt(-q / 2.0 + sq) + cbrt(-q / 2.0 - sq);
        Zmax = t1 + shift;
        Zmin = t1 + shift;
    } else {
        double pn = p;
        double rad = 2.0 * sqrt(-pn / 3.0);
        double arg = 3.0 * q / (2.0 * pn) * sqrt(-3.0 / pn);
        double phi;
        if (arg < -1.0) arg = -1.0;
        else if (arg > 1.0) arg = 1.0;
        phi = acos(arg) / 3.0;
        Zmax = rad * cos(phi) + shift;
        Zmin = rad * cos(phi + 2.0 * M_PI / 3.0) + shift;
    }
    if (!(Zmin > B)) Zmin = Zmax;   /* only roots above B are physical */
    for (k = 0; k < e->polish; k++) {
        Zmax = newton_cubic(Zmax, c2, c1, c0);
        Zmin = newton_cubic(Zmin, c2, c1, c0);
    }
    *Zmin_out = Zmin;
    *Zmax_out = Zmax;
}

static double g_res_RT(const eos_t *e, double Z, double A, double B)
{
    double L = log((Z + e->d1 * B) / (Z + e->d2 * B));
    return Z - 1.0 - log(Z - B) - A / (B * e->dd) * L;
}

/* CubicEOS.choose_root: code > 0 largest, < 0 smallest, 0 lowest Gibbs energy */
static double choose_root(const eos_t *e, double A, double B, int code)
{
    double Zmin, Zmax;
    z_roots(e, A, B, &Zmin, &Zmax);
    if (code > 0) return Zmax;
    if (code < 0) return Zmin;
    if (!(Zmax - Zmin > e->distinct * Zmax)) return Zmax;
    return (g_res_RT(e, Zmin, A, B) < g_res_RT(e, Zmax, A, B)) ? Zmin : Zmax;
}

/* CubicEOS.lnphi for one phase; returns Z; work needs 3 nc doubles */
static double lnphi_one(const eos_t *e, double T, double P, const double *x, int code,
                        double *lnphi, double *work)
{
    int nc = e->nc, i;
    double a, b, RT, A, B, Z, L, c, lnZB;
    double *psi = work;
    mixture(e, T, x, psi, &a, &b, work + nc);
    RT = e->R * T;
    A = a * P / (RT * RT);
    B = b * P / RT;
    Z = choose_root(e, A, B, code);
    L = log((Z + e->d1 * B) / (Z + e->d2 * B));
    c = A / (B * e->dd) * L;
    lnZB = log(Z - B);
    for (i = 0; i < nc; i++) {
        double bib = e->bs[i] / b;
        lnphi[i] = bib * (Z - 1.0) - lnZB - c * (2.0 * psi[i] / a - bib);
    }
    return Z;
}

/* Z of one phase only */
static double z_one(const eos_t *e, double T, double P, const double *x, int code, double *work)
{
    double a, b, RT;
    mixture(e, T, x, work, &a, &b, work + e->nc);
    RT = e->R * T;
    return choose_root(e, a * P / (RT * RT), b * P / RT, code);
}

/* ln phi and Z of n phases; code may be NULL (all lowest Gibbs energy). Returns 0. */
LF_EXPORT int lf_lnphi(int n, int nc, const double *par, const double *T, const double *P,
                       const double *xs, const int *code, double *lnphi, double *Z)
{
    eos_t e = eos_view(nc, par);
    double *work = malloc(3 * (size_t)nc * sizeof(double));
    int i;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++)
        Z[i] = lnphi_one(&e, T[i], P[i], xs + (size_t)i * nc, code ? code[i] : 0,
                         lnphi + (size_t)i * nc, work);
    eos_release(&e);
    free(work);
    return 0;
}

/* ---------------------------------------------------------------- stability (flash.stability) */
/* cfg: [0] LN_TOL, [1] TRIVIAL_DIST, [2] STABILITY_MAX_ITER, [3] early-exit tm threshold,
 * [4] COLD_TRIAL_T, [5] TM_UNSTABLE */
enum { ST_LN_TOL, ST_TRIVIAL_DIST, ST_MAX_ITER, ST_EARLY_TM, ST_COLD_T, ST_TM_UNSTABLE, ST_NCFG };
/* the four standard trials and at most this many cold trials (flash.COLD_TRIAL_COMPONENTS) */
#define ST_MAX_COLD 2
#define ST_NT (4 + ST_MAX_COLD)
#define ST_WORK(nc) (((size_t)7 + 4 + ST_MAX_COLD) * (size_t)(nc))

/* One trial phase: iterate ln W in place; returns tm (0 for a trivial trial), sets *Zw.
 * work: 6 nc */
static double stability_trial(const eos_t *e, double T, double P, const double *z, const double *d,
                              double *lnW, const double *cfg, int early_exit, double *Zw,
                              double *work)
{
    int nc = e->nc, it, k;
    int max_iter = (int)cfg[ST_MAX_ITER];
    double tm = 0.0;
    double *Wa = work, *w = work + nc, *lnph = work + 2 * nc, *w3 = work + 3 * nc;
    for (it = 0; it < max_iter; it++) {
        double sW = 0.0, tmi = 1.0, step = 0.0, dist = 0.0, Z;
        int done, trivial, nan_step = 0;
        for (k = 0; k < nc; k++) {
            Wa[k] = exp(lnW[k]);
            sW += Wa[k];
        }
        for (k = 0; k < nc; k++) w[k] = Wa[k] / sW;
        Z = lnphi_one(e, T, P, w, 0, lnph, w3);
        *Zw = Z;
        for (k = 0; k < nc; k++) {
            if (z[k] > 0.0) {
                double nw = d[k] - lnph[k];
                double s = fabs(nw - lnW[k]);
                tmi += Wa[k] * (lnW[k] + lnph[k] - d[k] - 1.0);
                if (isnan(s)) nan_step = 1;
                else if (s > step) step = s;
                lnW[k] = nw;
            } else {
                lnW[k] = -INFINITY;
            }
            dist += (w[k] - z[k]) * (w[k] - z[k]);
        }
        if (nan_step) step = NAN;
        trivial = dist < cfg[ST_TRIVIAL_DIST];
        done = (step < cfg[ST_LN_TOL]) || trivial;
        if (early_exit) done = done || (tmi < cfg[ST_EARLY_TM]);
        tm = trivial ? 0.0 : tmi;
        if (done) break;
    }
    return tm;
}

/* Stability test of one feed (the four standard trials; where they find it stable and T is
 * below cfg[ST_COLD_T], a nearly pure trial of each flagged component present, in component
 * order, at most ST_MAX_COLD); returns the most negative tm and writes that trial's composition
 * ws and Z. Where tms_all is not NULL, every trial's tm, composition and Z go to tms_all (ST_NT),
 * ws_all (ST_NT x nc) and Zs_all (ST_NT); a trial not run has tm 0, the feed's composition and
 * Z 0. With all_ws 0, ws_all is written only where more than one trial is unstable, and only for
 * the unstable ones (what the flash needs; the common case then costs nothing more).
 * work: ST_WORK(nc) */
static double stability_case(const eos_t *e, double T, double P, const double *z, const double *lz,
                             const double *Ki, const double *cfg, int early_exit, double *ws,
                             double *Zbest, double *tms_all, double *ws_all, double *Zs_all,
                             int all_ws, double *work)
{
    int nc = e->nc, k, t, nt = 4, ncold = 0, heavy = 0, light = 0, best = 0, cold[ST_MAX_COLD];
    int cold_ran = 0;
    double *d = work, *tw = work + nc, *lnW = work + 7 * nc;
    double tms[ST_NT], Zs[ST_NT], best_tm, sW = 0.0, hv = -INFINITY,
           lv = INFINITY;
    for (k = 0; k < nc; k++) {
        int pres = z[k] > 0.0;
        d[k] = pres ? log(z[k]) + lz[k] : -INFINITY;
        if (pres && e->Tcs[k] > hv) { hv = e->Tcs[k]; heavy = k; }
        if (pres && e->Tcs[k] < lv) { lv = e->Tcs[k]; light = k; }
        if (pres && e->cold[k] != 0.0 && ncold < ST_MAX_COLD) cold[ncold++] = k;
    }
    for (t = 0; t < nt; t++) {
        double *lw = lnW + t * nc;
        for (k = 0; k < nc; k++) {
            double W;
            if (t == 0) W = z[k] * Ki[k];
            else if (t == 1) W = z[k] / Ki[k];
            else W = (z[k] > 0.0) ? 1e-3 * z[k] : 0.0;
            if (t == 2 && k == heavy) W = 1.0;
            if (t == 3 && k == light) W = 1.0;
            lw[k] = (z[k] > 0.0) ? log(W) : -INFINITY;
        }
        Zs[t] = 0.0;
        tms[t] = stability_trial(e, T, P, z, d, lw, cfg, early_exit, &Zs[t], tw);
    }
    /* first minimum; a NaN wins (as numpy's argmin) */
    best_tm = tms[0];
    for (t = 1; t < nt && !isnan(best_tm); t++)
        if (isnan(tms[t]) || tms[t] < best_tm) { best_tm = tms[t]; best = t; }
    /* cold trials: only where the feed looks stable so far */
    if (best_tm >= cfg[ST_TM_UNSTABLE] && T < cfg[ST_COLD_T]) {
        cold_ran = 1;
        for (t = 4; t < 4 + ncold; t++) {
            double *lw = lnW + t * nc;
            for (k = 0; k < nc; k++) {
                double W = (z[k] > 0.0) ? 1e-3 * z[k] : 0.0;
                if (k == cold[t - 4]) W = 1.0;
                lw[k] = (z[k] > 0.0) ? log(W) : -INFINITY;
            }
            Zs[t] = 0.0;
            tms[t] = stability_trial(e, T, P, z, d, lw, cfg, early_exit, &Zs[t], tw);
            if (!isnan(best_tm) && (isnan(tms[t]) || tms[t] < best_tm)) {
                best_tm = tms[t];
                best = t;
            }
        }
    }
    for (k = 0; k < nc; k++) {
        ws[k] = exp(lnW[best * nc + k]);
        sW += ws[k];
    }
    for (k = 0; k < nc; k++) ws[k] /= sW;
    *Zbest = Zs[best];
    if (tms_all) {
        int ran = cold_ran ? 4 + ncold : 4, n_unst = 0;
        for (t = 0; t < ran; t++) n_unst += tms[t] < cfg[ST_TM_UNSTABLE];
        for (t = 0; t < ST_NT; t++) {
            double *wo = ws_all + (size_t)t * nc, s2 = 0.0;
            if (t < ran) {
                tms_all[t] = tms[t];
                Zs_all[t] = Zs[t];
                if (!all_ws && !(n_unst > 1 && tms[t] < cfg[ST_TM_UNSTABLE])) continue;
                for (k = 0; k < nc; k++) {
                    wo[k] = exp(lnW[t * nc + k]);
                    s2 += wo[k];
                }
                for (k = 0; k < nc; k++) wo[k] /= s2;
            } else {
                tms_all[t] = 0.0;
                Zs_all[t] = 0.0;
                if (all_ws)
                    for (k = 0; k < nc; k++) wo[k] = z[k];
            }
        }
    }
    return best_tm;
}

/* Stability test of n feeds at (T, P) with ln phi of the feed lnphis_z and Wilson K-values K
 * (n x nc): trials z K, z / K, nearly pure heaviest and nearly pure lightest component present.
 * Output per feed: the most negative tm, the composition of that trial and its Z; and every
 * trial's (n x n_trials, n x n_trials x nc, n x n_trials; n_trials must be ST_NT, else -2). */
LF_EXPORT int lf_stability(int n, int nc, const double *par, const double *T, const double *P,
                           const double *zs, const double *lnphis_z, const double *K,
                           const double *cfg, int early_exit, double *tm_out, double *ws_out,
                           double *Z_out, int n_trials, double *tm_all, double *ws_all,
                           double *Z_all)
{
    eos_t e;
    double *work;
    int i;
    if (n_trials != ST_NT) return -2;
    e = eos_view(nc, par);
    work = malloc(ST_WORK(nc) * sizeof(double));
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        size_t o = (size_t)i * nc;
        tm_out[i] = stability_case(&e, T[i], P[i], zs + o, lnphis_z + o, K + o, cfg, early_exit,
                                   ws_out + o, &Z_out[i], tm_all + (size_t)i * ST_NT,
                                   ws_all + o * ST_NT, Z_all + (size_t)i * ST_NT, 1, work);
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* ---------------------------------------------------------------- two-phase flash */
/* cfg: see native.py (same order) */
enum {
    TP_TOL, TP_MAX_ITER, TP_ACCEL_EVERY, TP_GDEM_MAX_LAMBDA, TP_GDEM_MAX_STEP, TP_GDEM_AGREE,
    TP_TRIVIAL_LNK, TP_RR_TOL, TP_RR_MAX_ITER, TP_NEG_LO, TP_NEG_HI, TP_NCFG
};

/* flash.rachford_rice(zs, Ks, negative=True, beta0) for one case; Km1 = K - 1 given */
static double rr_negative(int nc, const double *z, const double *K, const double *Km1,
                          double beta0, const double *cfg)
{
    double lo = -INFINITY, hi = INFINITY, Kmax = -INFINITY, Kmin = INFINITY, a_, b_, beta;
    int k, it, straddle, active;
    int max_iter = (int)cfg[TP_RR_MAX_ITER];
    for (k = 0; k < nc; k++) {
        if (K[k] > 1.0) {
            double v = (K[k] * z[k] - 1.0) / Km1[k];
            if (v > lo || isnan(v)) lo = (isnan(lo) ? lo : v);
        }
        if (K[k] < 1.0) {
            double v = (1.0 - z[k]) / (1.0 - K[k]);
            if (v < hi || isnan(v)) hi = (isnan(hi) ? hi : v);
        }
        if (K[k] > Kmax || isnan(K[k])) Kmax = isnan(Kmax) ? Kmax : K[k];
        if (K[k] < Kmin || isnan(K[k])) Kmin = isnan(Kmin) ? Kmin : K[k];
    }
    a_ = 1.0 / (1.0 - Kmax);
    b_ = 1.0 / (1.0 - Kmin);
    straddle = (Kmax > 1.0) && (Kmin < 1.0);
    active = straddle;
    if (!active) { lo = 0.0; hi = 1.0; }
    beta = 0.5 * (lo + hi);
    if (beta0 > lo && beta0 < hi) beta = beta0;
    for (it = 0; it < max_iter && active; it++) {
        double f = 0.0, df = 0.0, pa, pb, H, dH, nw;
        int done, bad;
        for (k = 0; k < nc; k++) {
            double inv = 1.0 / (1.0 + beta * Km1[k]);
            double t = z[k] * Km1[k] * inv;
            f += t;
            df += t * Km1[k] * inv;
        }
        df = -df;
        if (f > 0.0) lo = beta;
        if (f < 0.0) hi = beta;
        pa = beta - a_;
        pb = b_ - beta;
        H = pa * pb * f;
        dH = (pb - pa) * f + pa * pb * df;
        nw = beta - H / dH;
        done = (fabs(nw - beta) <= cfg[TP_RR_TOL] * fmax(fabs(beta), 1e-300))
               || (hi - lo < cfg[TP_RR_TOL]) || (f == 0.0);
        bad = ((nw <= lo) || (nw >= hi) || !isfinite(nw)) && !done;
        if (bad) nw = 0.5 * (lo + hi);
        if (done) nw = beta;
        beta = nw;
        if (done) active = 0;
    }
    if (beta < cfg[TP_NEG_LO]) beta = cfg[TP_NEG_LO];
    else if (beta > cfg[TP_NEG_HI]) beta = cfg[TP_NEG_HI];
    if (straddle) return beta;
    return (Kmax <= 1.0) ? 0.0 : 1.0;
}

/* flash._phase_compositions for one case */
static void phase_compositions(int nc, const double *z, const double *K, double beta, double *x,
                               double *y)
{
    double sx = 0.0, sy = 0.0;
    int k;
    for (k = 0; k < nc; k++) {
        double den = 1.0 + beta * (K[k] - 1.0);
        x[k] = z[k] / den;
        y[k] = K[k] * x[k];
        sx += x[k];
        sy += y[k];
    }
    for (k = 0; k < nc; k++) {
        x[k] /= sx;
        y[k] /= sy;
    }
}

/* flash._gdem for one case: hist holds 4 successive ln K (oldest first) */
static void gdem(int nc, const double *hist, double *lnK, const double *cfg, double *step)
{
    const double *h0 = hist, *h1 = hist + nc, *h2 = hist + 2 * nc, *h3 = hist + 3 * nc;
    double s12 = 0.0, s11 = 0.0, s23 = 0.0, s22 = 0.0, lam1, lam2, factor, big;
    int k, ok;
    for (k = 0; k < nc; k++) {
        double d1 = h1[k] - h0[k], d2 = h2[k] - h1[k], d3 = h3[k] - h2[k];
        s12 += d1 * d2;
        s11 += d1 * d1;
        s23 += d2 * d3;
        s22 += d2 * d2;
    }
    lam1 = s12 / s11;
    lam2 = s23 / s22;
    ok = isfinite(lam1) && isfinite(lam2) && (lam2 > 0.0) && (lam2 < cfg[TP_GDEM_MAX_LAMBDA])
         && (fabs(lam1 - lam2) < cfg[TP_GDEM_AGREE] * lam2);
    factor = ok ? lam2 / (1.0 - lam2) : 0.0;
    for (k = 0; k < nc; k++) step[k] = factor * (h3[k] - h2[k]);
    big = absmax(nc, step);
    if (big > cfg[TP_GDEM_MAX_STEP]) {
        double sc = cfg[TP_GDEM_MAX_STEP] / big;
        for (k = 0; k < nc; k++) step[k] *= sc;
    }
    for (k = 0; k < nc; k++) lnK[k] += step[k];
}

/* Successive substitution of one case from K-values Ks; writes lnK. work: 14 nc */
static void ss_case(const eos_t *e, double T, double P, const double *z, const double *Ks,
                    const double *cfg, double *lnK, double *beta_out, int *conv_out,
                    int *iters_out, double *resid_out, double *work)
{
    int nc = e->nc, max_iter = (int)cfg[TP_MAX_ITER], every = (int)cfg[TP_ACCEL_EVERY];
    double *K = work, *Km1 = K + nc, *x = Km1 + nc, *y = x + nc, *lx = y + nc, *ly = lx + nc;
    double *w3 = ly + nc, *hist = w3 + 3 * nc, *step = hist + 4 * nc;
    double beta = NAN, resid = INFINITY;
    int conv = 0, iters = 0, it, nh = 0, k;
    for (k = 0; k < nc; k++) lnK[k] = (z[k] > 0.0) ? log(Ks[k]) : 0.0;
    for (it = 0; it < max_iter && !conv; it++) {
        double err = 0.0, b;
        int nan_err = 0;
        for (k = 0; k < nc; k++) {
            K[k] = exp(lnK[k]);
            Km1[k] = K[k] - 1.0;
        }
        b = rr_negative(nc, z, K, Km1, beta, cfg);
        phase_compositions(nc, z, K, b, x, y);
        lnphi_one(e, T, P, x, 0, lx, w3);
        lnphi_one(e, T, P, y, 0, ly, w3);
        for (k = 0; k < nc; k++) {
            double nw = (z[k] > 0.0) ? lx[k] - ly[k] : 0.0;
            double s = fabs(nw - lnK[k]);
            if (isnan(s)) nan_err = 1;
            else if (s > err) err = s;
            lnK[k] = nw;
        }
        if (nan_err) err = NAN;
        resid = err;
        iters += 1;
        beta = b;
        conv = err < cfg[TP_TOL];
        /* history of the last 4 iterates for the extrapolation */
        if (nh == 4) {
            memmove(hist, hist + nc, 3 * (size_t)nc * sizeof(double));
            nh = 3;
        }
        memcpy(hist + (size_t)nh * nc, lnK, (size_t)nc * sizeof(double));
        nh++;
        if ((it + 1) % every == 0 && nh == 4) {
            if (!conv) gdem(nc, hist, lnK, cfg, step);
            nh = 0;
        }
        /* K collapsing onto 1 (trivial solution) is not a split */
        if (absmax(nc, lnK) < cfg[TP_TRIVIAL_LNK]) {
            conv = 1;
            resid = INFINITY;
        }
    }
    *beta_out = beta;
    *conv_out = conv;
    *iters_out = iters;
    *resid_out = resid;
}

/* Successive substitution of flash.two_phase_flash for n cases from K-values Ks. Output: lnK
 * (n x nc), beta (last Rachford-Rice solution), conv, iters, resid. */
LF_EXPORT int lf_two_phase_ss(int n, int nc, const double *par, const double *T, const double *P,
                              const double *zs, const double *Ks, const double *cfg, double *lnK_out,
                              double *beta_out, int *conv_out, int *iters_out, double *resid_out)
{
    eos_t e = eos_view(nc, par);
    double *work = malloc((size_t)(14 * nc) * sizeof(double));
    int i;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        size_t o = (size_t)i * nc;
        ss_case(&e, T[i], P[i], zs + o, Ks + o, cfg, lnK_out + o, &beta_out[i], &conv_out[i],
                &iters_out[i], &resid_out[i], work);
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* End of flash.two_phase_flash: from ln K, the negative-flash vapour fraction (no warm start), both
 * phase compositions and the lowest-Gibbs Z of each (for naming the phases by molar volume). */
LF_EXPORT int lf_split_finish(int n, int nc, const double *par, const double *T, const double *P,
                              const double *zs, const double *lnK, const double *cfg,
                              double *beta_out, double *xs_out, double *ys_out, double *Zx_out,
                              double *Zy_out)
{
    eos_t e = eos_view(nc, par);
    double *buf = malloc((size_t)(5 * nc) * sizeof(double));
    double *K, *Km1, *work;
    int i, k;
    if (!buf) return -1;
    eos_cache(&e);
    K = buf; Km1 = K + nc; work = Km1 + nc;   /* 3 nc */
    for (i = 0; i < n; i++) {
        const double *z = zs + (size_t)i * nc;
        double *x = xs_out + (size_t)i * nc, *y = ys_out + (size_t)i * nc, b;
        for (k = 0; k < nc; k++) {
            K[k] = exp(lnK[(size_t)i * nc + k]);
            Km1[k] = K[k] - 1.0;
        }
        b = rr_negative(nc, z, K, Km1, NAN, cfg);
        phase_compositions(nc, z, K, b, x, y);
        beta_out[i] = b;
        Zx_out[i] = z_one(&e, T[i], P[i], x, 0, work);
        Zy_out[i] = z_one(&e, T[i], P[i], y, 0, work);
    }
    eos_release(&e);
    free(buf);
    return 0;
}

/* ---------------------------------------------------------------- properties */
enum { PR_Z, PR_V, PR_HRES, PR_SRES, PR_CVRES, PR_DPDT, PR_DPDV, PR_GRES, PR_CSHIFT, PR_N };

/* CubicEOS.properties of one phase into out[PR_N]; work: 5 nc */
static void props_one(const eos_t *e, double Ti, double Pi, const double *x, int code, double *out,
                      double *work)
{
    int nc = e->nc, j, k;
    double *r = work, *rp = r + nc, *rpp = rp + nc, *S = rpp + nc, *Sp = S + nc;
    double sT = sqrt(Ti);
    double a = 0.0, b = 0.0, da = 0.0, d2a1 = 0.0, d2a2 = 0.0, d2a, cshift = 0.0;
    double RT, A, B, Z, v, L, bdd, v1, v2;
    for (k = 0; k < nc; k++) {
        alpha_r(e, k, Ti, sT, &r[k], &rp[k], &rpp[k]);
        S[k] = 0.0;
        Sp[k] = 0.0;
    }
    for (k = 0; k < nc; k++) {
        const double *row = e->omk + (size_t)k * nc;
        double xr = x[k] * r[k], xrp = x[k] * rp[k];
        for (j = 0; j < nc; j++) {
            S[j] += xr * row[j];
            Sp[j] += xrp * row[j];
        }
    }
    for (j = 0; j < nc; j++) {
        a += x[j] * r[j] * S[j];
        da += x[j] * rp[j] * S[j];
        d2a1 += x[j] * rpp[j] * S[j];
        d2a2 += x[j] * rp[j] * Sp[j];
        b += x[j] * e->bs[j];
        cshift += x[j] * e->cs[j];
    }
    da *= 2.0;
    d2a = 2.0 * (d2a1 + d2a2);
    RT = e->R * Ti;
    A = a * Pi / (RT * RT);
    B = b * Pi / RT;
    Z = choose_root(e, A, B, code);
    v = Z * RT / Pi;
    L = log((Z + e->d1 * B) / (Z + e->d2 * B));
    bdd = b * e->dd;
    v1 = v + e->d1 * b;
    v2 = v + e->d2 * b;
    out[PR_Z] = Z;
    out[PR_V] = v;
    out[PR_HRES] = RT * (Z - 1.0) + (Ti * da - a) / bdd * L;
    out[PR_SRES] = e->R * log(Z - B) + da / bdd * L;
    out[PR_CVRES] = Ti * d2a / bdd * L;
    out[PR_DPDT] = e->R / (v - b) - da / (v1 * v2);
    out[PR_DPDV] = -RT / ((v - b) * (v - b)) + a * (2.0 * v + e->u * b) / ((v1 * v2) * (v1 * v2));
    out[PR_GRES] = Z - 1.0 - log(Z - B) - A / (B * e->dd) * L;
    out[PR_CSHIFT] = cshift;
}

/* CubicEOS.properties for n phases; out is 9 x n, rows Z, v, h_res, s_res, cv_res, dPdT, dPdv,
 * g_res_RT, c_shift. code may be NULL (lowest Gibbs energy). */
LF_EXPORT int lf_properties(int n, int nc, const double *par, const double *T, const double *P,
                            const double *xs, const int *code, double *out)
{
    eos_t e = eos_view(nc, par);
    double *work = malloc((size_t)(5 * nc) * sizeof(double));
    double row[PR_N];
    int i, k;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        props_one(&e, T[i], P[i], xs + (size_t)i * nc, code ? code[i] : 0, row, work);
        for (k = 0; k < PR_N; k++) out[(size_t)k * n + i] = row[k];
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* cubic.phase_identification of one phase on its lowest-Gibbs root; work: 3 nc */
static double phase_id(const eos_t *e, double T, double P, const double *x, double *work)
{
    int nc = e->nc, j, k;
    double *r = work, *rp = r + nc, *S = rp + nc;
    double sT = sqrt(T), a = 0.0, b = 0.0, da = 0.0, RT, Z, v, D, dD, vb, P_v, P_vv, P_T, P_Tv;
    for (k = 0; k < nc; k++) {
        alpha_r(e, k, T, sT, &r[k], &rp[k], NULL);
        S[k] = 0.0;
    }
    for (k = 0; k < nc; k++) {
        const double *row = e->omk + (size_t)k * nc;
        double xr = x[k] * r[k];
        for (j = 0; j < nc; j++) S[j] += xr * row[j];
    }
    for (j = 0; j < nc; j++) {
        a += x[j] * r[j] * S[j];
        da += x[j] * rp[j] * S[j];
        b += x[j] * e->bs[j];
    }
    da *= 2.0;
    RT = e->R * T;
    Z = choose_root(e, a * P / (RT * RT), b * P / RT, 0);
    v = Z * RT / P;
    D = (v + e->d1 * b) * (v + e->d2 * b);
    dD = 2.0 * v + e->u * b;
    vb = v - b;
    P_v = -RT / (vb * vb) + a * dD / (D * D);
    P_vv = 2.0 * RT / (vb * vb * vb) + a * (2.0 / (D * D) - 2.0 * dD * dD / (D * D * D));
    P_T = e->R / vb - da / D;
    P_Tv = -e->R / (vb * vb) + da * dD / (D * D);
    return v * (P_Tv / P_T - P_vv / P_v);
}

/* ---------------------------------------------------------------- the P-T flash (flash.flash_TP) */
/* Constants of flash.py, in this order (native.py builds the block) */
enum {
    FP_LN_TOL, FP_TRIVIAL_DIST, FP_ST_MAX_ITER, FP_EARLY_TM, FP_SS_MAX_ITER, FP_ACCEL_EVERY,
    FP_GDEM_MAX_LAMBDA, FP_GDEM_MAX_STEP, FP_GDEM_AGREE, FP_TRIVIAL_LNK, FP_RR_TOL, FP_RR_MAX_ITER,
    FP_NEG_LO, FP_NEG_HI, FP_TM_UNSTABLE, FP_WILSON, FP_NEWTON_MAX_ITER, FP_NEWTON_FD_STEP,
    FP_NEWTON_MAX_STEP, FP_GIBBS_REL, FP_K_MIN, FP_K_MAX, FP_PHASE_ID_LIQUID, FP_VAPOUR_TC,
    FP_COLD_T, FP_DISTINCT, FP_NCFG
};

/* flash.wilson_K for one case */
static void wilson(const eos_t *e, const double *fc, double T, double P, double *K)
{
    int k;
    for (k = 0; k < e->nc; k++)
        K[k] = (e->Pcs[k] / P) * exp(fc[FP_WILSON] * (1.0 + e->omegas[k]) * (1.0 - e->Tcs[k] / T));
}

/* Gaussian elimination with partial pivoting, A (n x n, row major) x = rhs in place; 1 if a pivot
 * is exactly zero (numpy's solve raises there). */
static int solve_dense(int n, double *A, double *rhs)
{
    int i, j, k;
    for (k = 0; k < n; k++) {
        int p = k;
        double best = fabs(A[k * n + k]);
        for (i = k + 1; i < n; i++)
            if (fabs(A[i * n + k]) > best) { best = fabs(A[i * n + k]); p = i; }
        if (A[p * n + k] == 0.0) return 1;
        if (p != k) {
            double t;
            for (j = 0; j < n; j++) { t = A[k * n + j]; A[k * n + j] = A[p * n + j]; A[p * n + j] = t; }
            t = rhs[k]; rhs[k] = rhs[p]; rhs[p] = t;
        }
        for (i = k + 1; i < n; i++) {
            double f = A[i * n + k] / A[k * n + k];
            if (f == 0.0) continue;
            for (j = k; j < n; j++) A[i * n + j] -= f * A[k * n + j];
            rhs[i] -= f * rhs[k];
        }
    }
    for (k = n - 1; k >= 0; k--) {
        double s = rhs[k];
        for (j = k + 1; j < n; j++) s -= A[k * n + j] * rhs[j];
        rhs[k] = s / A[k * n + k];
    }
    return 0;
}

/* F(ln K) = ln K - (ln phi_L(x) - ln phi_V(y)) of flash._newton_lnK; work: 9 nc */
static void newton_F(const eos_t *e, const double *tp, double T, double P, const double *z,
                     const double *lk, double *F, double *work)
{
    int nc = e->nc, k;
    double *K = work, *Km1 = K + nc, *x = Km1 + nc, *y = x + nc, *lx = y + nc, *ly = lx + nc;
    double *w3 = ly + nc, b;
    for (k = 0; k < nc; k++) {
        K[k] = exp(lk[k]);
        Km1[k] = K[k] - 1.0;
    }
    b = rr_negative(nc, z, K, Km1, NAN, tp);
    phase_compositions(nc, z, K, b, x, y);
    lnphi_one(e, T, P, x, 0, lx, w3);
    lnphi_one(e, T, P, y, 0, ly, w3);
    for (k = 0; k < nc; k++) F[k] = lk[k] - (lx[k] - ly[k]);
}

/* flash._newton_lnK for one case (forward-difference Jacobian); work: 13 nc + nc^2 */
static void newton_case(const eos_t *e, const double *fc, const double *tp, double T, double P,
                        const double *z, double *lnK, int *ok, double *res, int *nit, double *work)
{
    int nc = e->nc, it, i, j, max_iter = (int)fc[FP_NEWTON_MAX_ITER];
    double h = fc[FP_NEWTON_FD_STEP], mx = fc[FP_NEWTON_MAX_STEP], tol = tp[TP_TOL];
    double *F0 = work, *Fp = F0 + nc, *lp = Fp + nc, *dx = lp + nc, *J = dx + nc;
    double *w9 = J + (size_t)nc * nc;
    *ok = 0;
    *res = INFINITY;
    *nit = 0;
    for (it = 0; it < max_iter; it++) {
        newton_F(e, tp, T, P, z, lnK, F0, w9);
        *res = absmax(nc, F0);
        if (*res < tol) {
            *ok = 1;
            break;
        }
        for (j = 0; j < nc; j++) {
            memcpy(lp, lnK, (size_t)nc * sizeof(double));
            lp[j] += h;
            newton_F(e, tp, T, P, z, lp, Fp, w9);
            for (i = 0; i < nc; i++) J[i * nc + j] = (Fp[i] - F0[i]) / h;
        }
        for (i = 0; i < nc; i++) dx[i] = -F0[i];
        if (solve_dense(nc, J, dx)) break;
        for (i = 0; i < nc; i++) {
            double d = dx[i];
            if (d > mx) d = mx;
            else if (d < -mx) d = -mx;
            lnK[i] += d;
        }
        *nit += 1;
    }
}

/* flash.two_phase_flash for one case: substitution, Newton finish, final split, phases named by
 * molar volume. work: 17 nc + nc^2 */
static void two_phase_case(const eos_t *e, const double *fc, double T, double P, const double *z,
                           const double *K0, double tol, double *beta, double *x, double *y,
                           int *conv, int *iters, double *resid, double *work)
{
    int nc = e->nc, k, cv, it;
    double tp[TP_NCFG], b, res, Zx, Zy;
    double *lnK = work, *rest = work + nc;
    tp[TP_TOL] = tol;
    tp[TP_MAX_ITER] = fc[FP_SS_MAX_ITER];
    tp[TP_ACCEL_EVERY] = fc[FP_ACCEL_EVERY];
    tp[TP_GDEM_MAX_LAMBDA] = fc[FP_GDEM_MAX_LAMBDA];
    tp[TP_GDEM_MAX_STEP] = fc[FP_GDEM_MAX_STEP];
    tp[TP_GDEM_AGREE] = fc[FP_GDEM_AGREE];
    tp[TP_TRIVIAL_LNK] = fc[FP_TRIVIAL_LNK];
    tp[TP_RR_TOL] = fc[FP_RR_TOL];
    tp[TP_RR_MAX_ITER] = fc[FP_RR_MAX_ITER];
    tp[TP_NEG_LO] = fc[FP_NEG_LO];
    tp[TP_NEG_HI] = fc[FP_NEG_HI];
    ss_case(e, T, P, z, K0, tp, lnK, &b, &cv, &it, &res, rest);
    if ((!cv || !isfinite(res)) && absmax(nc, lnK) >= tp[TP_TRIVIAL_LNK]) {
        int ok, nit;
        double r2;
        newton_case(e, fc, tp, T, P, z, lnK, &ok, &r2, &nit, rest);
        cv = ok;
        res = r2;
        it += nit;
    }
    {
        double *K = rest, *Km1 = rest + nc, *w3 = rest + 2 * nc;
        for (k = 0; k < nc; k++) {
            K[k] = exp(lnK[k]);
            Km1[k] = K[k] - 1.0;
        }
        b = rr_negative(nc, z, K, Km1, NAN, tp);
        phase_compositions(nc, z, K, b, x, y);
        if (absmax(nc, lnK) < tp[TP_TRIVIAL_LNK]) cv = 0;
        Zx = z_one(e, T, P, x, 0, w3);
        Zy = z_one(e, T, P, y, 0, w3);
    }
    if (Zy < Zx) {
        for (k = 0; k < nc; k++) {
            double t = x[k];
            x[k] = y[k];
            y[k] = t;
        }
        b = 1.0 - b;
    }
    *beta = b;
    *conv = cv;
    *iters = it;
    *resid = res;
}

/* sum_i x_i (ln x_i + ln phi_i(x)) on the lowest-Gibbs root; work 4 nc */
static double g_mix(const eos_t *e, double T, double P, const double *x, double *work)
{
    int k;
    double g = 0.0, *lp = work;
    lnphi_one(e, T, P, x, 0, lp, work + e->nc);
    for (k = 0; k < e->nc; k++)
        if (x[k] > 0.0) g += x[k] * (log(x[k]) + lp[k]);
    return g;
}

typedef struct {
    double beta, resid;
    int nph, conv, iters;
} pt_t;

/* converge() and store() of flash.flash_TP for one case: converge from K (work copy), accept by
 * the Gibbs energy (G/RT of the split to *g_out), store an accepted split into x, y, r (the
 * iterations are added to r in any case). work: 20 nc + nc^2 */
static void split_case(const eos_t *e, const double *fc, double T, double P, const double *z,
                       const double *Kin, double tol, double *x, double *y, pt_t *r, int *ok_out,
                       int *failed_out, double *g_out, double *work)
{
    int nc = e->nc, k, bad = 0, conv, iters, ok;
    double *K = work, *xt = K + nc, *yt = xt + nc, *rest = yt + nc, beta, resid, big;
    for (k = 0; k < nc; k++) {
        K[k] = (z[k] > 0.0) ? Kin[k] : 1.0;
        if (!(isfinite(K[k]) && K[k] > 0.0)) bad = 1;
    }
    if (bad) wilson(e, fc, T, P, K);
    for (k = 0; k < nc; k++) {
        if (K[k] < fc[FP_K_MIN]) K[k] = fc[FP_K_MIN];
        else if (K[k] > fc[FP_K_MAX]) K[k] = fc[FP_K_MAX];
    }
    two_phase_case(e, fc, T, P, z, K, tol, &beta, xt, yt, &conv, &iters, &resid, rest);
    ok = conv && (beta > 0.0) && (beta < 1.0);
    if (ok) {
        /* accept a split only when it lowers the Gibbs energy */
        double gL = g_mix(e, T, P, xt, rest), gV = g_mix(e, T, P, yt, rest);
        double g_split = beta * gV + (1.0 - beta) * gL;
        double g_single = g_mix(e, T, P, z, rest);
        ok = g_split < g_single + fc[FP_GIBBS_REL] * fabs(g_single);
        *g_out = g_split;
    }
    if (ok) {
        r->beta = beta;
        memcpy(x, xt, (size_t)nc * sizeof(double));
        memcpy(y, yt, (size_t)nc * sizeof(double));
        r->nph = 2;
        r->resid = resid;
    }
    r->iters += iters;
    /* the iterations failed unless K collapsed onto 1 */
    for (k = 0; k < nc; k++) {
        double q = yt[k] / xt[k];
        if (q < fc[FP_K_MIN]) q = fc[FP_K_MIN];
        else if (q > fc[FP_K_MAX]) q = fc[FP_K_MAX];
        K[k] = log(q);
    }
    big = absmax(nc, K);
    *failed_out = !conv && !(big < fc[FP_TRIVIAL_LNK]);
    *ok_out = ok;
}

#define PT_WORK(nc) ((32 + ST_NT) * (size_t)(nc) + (size_t)(nc) * (nc))

/* flash.flash_TP for one case (mixtures; a pure component is left with x = y = z, one phase,
 * beta NaN, for the caller to name). Kin may be NULL. work: PT_WORK(nc) */
static void flash_pt_case(const eos_t *e, const double *fc, double T, double P, const double *z,
                          const double *Kin, int assume, double tol, double *x, double *y, pt_t *r,
                          double *work)
{
    int nc = e->nc, k, npres = 0, test, ok, failed;
    memcpy(x, z, (size_t)nc * sizeof(double));
    memcpy(y, z, (size_t)nc * sizeof(double));
    r->nph = 1;
    r->conv = 1;
    r->iters = 0;
    r->resid = 0.0;
    for (k = 0; k < nc; k++) npres += z[k] > 0.0;
    if (npres == 1) {
        r->beta = NAN;
        return;
    }
    {   /* flash.is_vapour_like: at or above the estimated critical temperature (Li's rule with
         * b-weighted volume fractions, components.critical_temperature_estimate), else by phase_id */
        double wt = 0.0, wb = 0.0;
        for (k = 0; k < nc; k++) {
            wt += z[k] * e->bs[k] * e->Tcs[k];
            wb += z[k] * e->bs[k];
        }
        r->beta = (T >= fc[FP_VAPOUR_TC] * (wt / wb)
                   || phase_id(e, T, P, z, work) <= fc[FP_PHASE_ID_LIQUID]) ? 1.0 : 0.0;
    }
    test = (assume == 0);
    if (assume == 2) {
        if (Kin) {
            double g;
            split_case(e, fc, T, P, z, Kin, tol, x, y, r, &ok, &failed, &g, work);
            /* a warm start that does not give a split proves nothing: test stability */
            if (!ok) test = 1;
        } else {
            test = 1;
        }
    }
    if (test) {
        double st[ST_NCFG], Zz, Zw, tm, tms[ST_NT], Zs[ST_NT], key[ST_NT];
        int t, n_unst;
        double *lz = work, *Kw = lz + nc, *wt = Kw + nc, *K = wt + nc, *wa = K + nc;
        double *xc = wa + ST_NT * (size_t)nc, *yc = xc + nc, *rest = yc + nc;
        st[ST_LN_TOL] = fc[FP_LN_TOL];
        st[ST_TRIVIAL_DIST] = fc[FP_TRIVIAL_DIST];
        st[ST_MAX_ITER] = fc[FP_ST_MAX_ITER];
        st[ST_EARLY_TM] = fc[FP_EARLY_TM];
        st[ST_COLD_T] = fc[FP_COLD_T];
        st[ST_TM_UNSTABLE] = fc[FP_TM_UNSTABLE];
        Zz = lnphi_one(e, T, P, z, 0, lz, rest);
        wilson(e, fc, T, P, Kw);
        tm = stability_case(e, T, P, z, lz, Kw, st, 0, wt, &Zw, tms, wa, Zs, 0, rest);
        for (t = 0, n_unst = 0; t < ST_NT; t++) n_unst += tms[t] < fc[FP_TM_UNSTABLE];
        if (n_unst == 1 && tm < fc[FP_TM_UNSTABLE]) {
            /* one unstable trial (the common case): its split, as the loop below would do */
            int vap = Zw > Zz;
            double g;
            for (k = 0; k < nc; k++) {
                if (vap) K[k] = (z[k] > 0.0) ? wt[k] / z[k] : 1.0;
                else K[k] = (wt[k] > 0.0) ? z[k] / wt[k] : 1.0;
            }
            split_case(e, fc, T, P, z, K, tol, x, y, r, &ok, &failed, &g, rest);
            /* stability proved a second phase but the split did not converge: say so */
            if (failed && !ok) r->conv = 0;
        } else if (tm < fc[FP_TM_UNSTABLE]) {
            /* flash._split_trials: a split from each unstable trial by increasing tm (ties by
             * index), skipping a trial that found the composition of an earlier one; the split of
             * lowest Gibbs energy is kept, a later one only when lower by more than round-off */
            int kept[ST_NT], nkept = 0, have = 0, failed_any = 0, q;
            double g_best = NAN;
            for (t = 0; t < ST_NT; t++)
                key[t] = (tms[t] < fc[FP_TM_UNSTABLE]) ? tms[t] : INFINITY;
            for (;;) {
                int c = -1, same = 0;
                for (t = 0; t < ST_NT; t++)
                    if (isfinite(key[t]) && (c < 0 || key[t] < key[c])) c = t;
                if (c < 0) break;
                key[c] = INFINITY;
                for (q = 0; q < nkept && !same; q++) {
                    double d2 = 0.0;
                    for (k = 0; k < nc; k++) {
                        double dd = wa[(size_t)c * nc + k] - wa[(size_t)kept[q] * nc + k];
                        d2 += dd * dd;
                    }
                    same = d2 < fc[FP_DISTINCT];
                }
                if (same) continue;
                kept[nkept++] = c;
                {
                    const double *w = wa + (size_t)c * nc;
                    int vap = Zs[c] > Zz;
                    pt_t rc = *r;
                    double g = NAN;
                    for (k = 0; k < nc; k++) {
                        if (vap) K[k] = (z[k] > 0.0) ? w[k] / z[k] : 1.0;
                        else K[k] = (w[k] > 0.0) ? z[k] / w[k] : 1.0;
                    }
                    split_case(e, fc, T, P, z, K, tol, xc, yc, &rc, &ok, &failed, &g, rest);
                    r->iters = rc.iters;
                    failed_any |= failed;
                    if (ok && (!have || g < g_best - fc[FP_GIBBS_REL] * fabs(g_best))) {
                        memcpy(x, xc, (size_t)nc * sizeof(double));
                        memcpy(y, yc, (size_t)nc * sizeof(double));
                        r->beta = rc.beta;
                        r->nph = 2;
                        r->resid = rc.resid;
                        have = 1;
                        g_best = g;
                    }
                }
            }
            /* stability proved a second phase but no split converged: say so */
            if (failed_any && !have) r->conv = 0;
        }
    }
}

/* flash.flash_TP over n cases; Kin (n x nc) and assume (n) may be NULL; tol per case. */
LF_EXPORT int lf_flash_pt(int n, int nc, const double *par, const double *fc, const double *T,
                          const double *P, const double *zs, const double *Kin, const int *assume,
                          const double *tol, double *beta, double *xs, double *ys, int *nph,
                          int *conv, int *iters, double *resid)
{
    eos_t e = eos_view(nc, par);
    double *work = malloc(PT_WORK(nc) * sizeof(double));
    int i;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        size_t o = (size_t)i * nc;
        pt_t r;
        flash_pt_case(&e, fc, T[i], P[i], zs + o, Kin ? Kin + o : NULL, assume ? assume[i] : 0,
                      tol[i], xs + o, ys + o, &r, work);
        beta[i] = r.beta;
        nph[i] = r.nph;
        conv[i] = r.conv;
        iters[i] = r.iters;
        resid[i] = r.resid;
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* ---------------------------------------------------------------- ideal gas (components.py) */
/* Block ig: [0] P_REF [Pa], [1..7] unused, then C1, C2, C3, C4, C5 (Aly-Lee), a0..a4 (cp/R
 * polynomial), H(T_REF), S(T_REF), M (nc each). */
#define IG_HEADER 8
typedef struct {
    double Pref;
    const double *C1, *C2, *C3, *C4, *C5, *a0, *a1, *a2, *a3, *a4, *Href, *Sref, *Ms;
} ig_t;

static ig_t ig_view(int nc, const double *g)
{
    ig_t v;
    const double *p = g + IG_HEADER;
    v.Pref = g[0];
    v.C1 = p; v.C2 = p + nc; v.C3 = p + 2 * nc; v.C4 = p + 3 * nc; v.C5 = p + 4 * nc;
    v.a0 = p + 5 * nc; v.a1 = p + 6 * nc; v.a2 = p + 7 * nc; v.a3 = p + 8 * nc; v.a4 = p + 9 * nc;
    v.Href = p + 10 * nc; v.Sref = p + 11 * nc; v.Ms = p + 12 * nc;
    return v;
}

/* ComponentSet.h0, s0, cp0 of every component at T (any output may be NULL). The hyperbolic
 * functions of x = C3/T and y = C5/T come from one exponential each (x, y > 0); a term whose
 * coefficient is zero is skipped (numpy multiplies it by zero). Above 20, ln sinh and ln cosh are
 * x - ln 2 to double precision, as in components._log_sinh. */
static void hyperbolic(double x, int is_sinh, double *th, double *q, double *lnf)
{
    /* tanh x, x / sinh x (or x / cosh x) and ln sinh x (or ln cosh x) for x > 0 */
    if (x > 20.0) {
        *th = 1.0;
        *q = 2.0 * x * exp(-x);
        *lnf = x - log(2.0);
    } else {
        double ex = exp(x), emx = 1.0 / ex, f = 0.5 * (is_sinh ? ex - emx : ex + emx);
        *th = (ex - emx) / (ex + emx);
        *q = x / f;
        *lnf = log(f);
    }
}

static void ideal_gas(const ig_t *g, int nc, double R, double T, double *h0, double *s0,
                      double *cp0)
{
    int k;
    double lnT = log(T);
    for (k = 0; k < nc; k++) {
        double cp = g->C1[k], H = g->C1[k] * T, S = g->C1[k] * lnT;
        if (g->C2[k] != 0.0) {
            double x = g->C3[k] / T, th, q, lsh;
            hyperbolic(x, 1, &th, &q, &lsh);
            cp += g->C2[k] * q * q;
            H += g->C2[k] * g->C3[k] / th;
            S += g->C2[k] * (x / th - lsh);
        }
        if (g->C4[k] != 0.0) {
            double y = g->C5[k] / T, th, q, lch;
            hyperbolic(y, 0, &th, &q, &lch);
            cp += g->C4[k] * q * q;
            H -= g->C4[k] * g->C5[k] * th;
            S -= g->C4[k] * (y * th - lch);
        }
        if (cp0)
            cp0[k] = cp + R * (g->a0[k] + T * (g->a1[k] + T * (g->a2[k] + T * (g->a3[k]
                                                                           + T * g->a4[k]))));
        if (h0) {
            H += R * T * (g->a0[k] + T * (g->a1[k] / 2 + T * (g->a2[k] / 3 + T * (g->a3[k] / 4
                                                                               + T * g->a4[k] / 5))));
            h0[k] = H - g->Href[k];
        }
        if (s0) {
            S += R * (g->a0[k] * lnT + T * (g->a1[k] + T * (g->a2[k] / 2 + T * (g->a3[k] / 3
                                                                             + T * g->a4[k] / 4))));
            s0[k] = S - g->Sref[k];
        }
    }
}

static double mix_entropy_sum(int nc, const double *x)
{
    double m = 0.0;
    int k;
    for (k = 0; k < nc; k++)
        if (x[k] > 0.0) m += x[k] * log(x[k]);
    return m;
}

/* h, s and cp of one phase (CubicEngine._hs_of_split's hs and cp); work 5 nc; h0, s0, cp0 given
 * (s0 may be NULL: s is then not computed; cp0 NULL: cp not computed) */
static void hs_phase(const eos_t *e, const ig_t *g, double T, double P, const double *x,
                     const double *h0, const double *s0, const double *cp0, double *h, double *s,
                     double *cp, double *work)
{
    int nc = e->nc, k;
    double p[PR_N], sh = 0.0, ss = 0.0, sc = 0.0, dvdT;
    props_one(e, T, P, x, 0, p, work);
    for (k = 0; k < nc; k++) {
        sh += x[k] * h0[k];
        if (s0) ss += x[k] * s0[k];
        if (cp0) sc += x[k] * cp0[k];
    }
    *h = sh + p[PR_HRES];
    if (s0) *s = ss - e->R * log(P / g->Pref) - e->R * mix_entropy_sum(nc, x) + p[PR_SRES];
    if (cp) {
        dvdT = -p[PR_DPDT] / p[PR_DPDV];
        *cp = sc - e->R + p[PR_CVRES] + T * p[PR_DPDT] * dvdT;
    }
}

/* CubicEngine._hs_of_split for one case (with_s 0: s is not computed, left NaN); work 8 nc */
static void hs_of_split_case(const eos_t *e, const ig_t *g, double T, double P, const double *z,
                             int nph, double beta, const double *x, const double *y, int with_s,
                             double *h, double *s, double *cp, double *work)
{
    int nc = e->nc, two = nph == 2;
    double *h0 = work, *s0 = with_s ? work + nc : NULL, *cp0 = work + 2 * nc, *w5 = work + 3 * nc;
    double hA, sA = NAN, cpA;
    ideal_gas(g, nc, e->R, T, h0, s0, cp0);
    hs_phase(e, g, T, P, two ? y : z, h0, s0, cp0, &hA, &sA, &cpA, w5);
    if (two) {
        double hL, sL = NAN;
        hs_phase(e, g, T, P, x, h0, s0, NULL, &hL, &sL, NULL, w5);
        *h = beta * hA + (1.0 - beta) * hL;
        *s = beta * sA + (1.0 - beta) * sL;
        *cp = NAN;
    } else {
        *h = hA;
        *s = sA;
        *cp = cpA;
    }
}

/* CubicEngine._hs_of_split over n cases */
LF_EXPORT int lf_hs_of_split(int n, int nc, const double *par, const double *ig, const double *T,
                             const double *P, const double *zs, const int *nph,
                             const double *beta, const double *xs, const double *ys, double *h,
                             double *s, double *cp)
{
    eos_t e = eos_view(nc, par);
    ig_t g = ig_view(nc, ig);
    double *work = malloc((size_t)(8 * nc) * sizeof(double));
    int i;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        size_t o = (size_t)i * nc;
        hs_of_split_case(&e, &g, T[i], P[i], zs + o, nph[i], beta[i], xs + o, ys + o, 1, &h[i],
                         &s[i], &cp[i], work);
    }
    eos_release(&e);
    free(work);
    return 0;
}

enum { PH_H, PH_S, PH_CP, PH_CV, PH_JT, PH_W, PH_V, PH_Z, PH_DENSITY, PH_M, PH_N };

/* CubicEngine._phase for one phase into out[PH_N]; work 8 nc */
static void phase_one(const eos_t *e, const ig_t *g, double Ti, double Pi, const double *x,
                      int code, int vshift, double *out, double *work)
{
    int nc = e->nc, k;
    double *h0 = work, *s0 = work + nc, *cp0 = work + 2 * nc, *w5 = work + 3 * nc;
    double p[PR_N], sh = 0.0, ss = 0.0, sc = 0.0, M = 0.0;
    double cv, cp, dvdT, v, vr;
    ideal_gas(g, nc, e->R, Ti, h0, s0, cp0);
    props_one(e, Ti, Pi, x, code, p, w5);
    for (k = 0; k < nc; k++) {
        sh += x[k] * h0[k];
        ss += x[k] * s0[k];
        sc += x[k] * cp0[k];
        M += x[k] * g->Ms[k];
    }
    cv = sc - e->R + p[PR_CVRES];
    dvdT = -p[PR_DPDT] / p[PR_DPDV];
    cp = cv + Ti * p[PR_DPDT] * dvdT;
    v = p[PR_V];
    vr = vshift ? v - p[PR_CSHIFT] : v;
    out[PH_H] = sh + p[PR_HRES];
    out[PH_S] = ss - e->R * log(Pi / g->Pref) - e->R * mix_entropy_sum(nc, x) + p[PR_SRES];
    out[PH_CP] = cp;
    out[PH_CV] = cv;
    out[PH_JT] = (Ti * dvdT - v) / cp;
    out[PH_W] = sqrt(-v * v * (cp / cv) * p[PR_DPDV] / M);
    out[PH_V] = vr;
    out[PH_Z] = Pi * vr / (e->R * Ti);
    out[PH_DENSITY] = M / vr;
    out[PH_M] = M;
}

/* CubicEngine._phase over n phases: out is 10 x n, rows h, s, cp, cv, jt, w, v, Z, density,
 * molar_mass; code may be NULL; vshift: report volumes with the Peneloux shift. */
LF_EXPORT int lf_phase(int n, int nc, const double *par, const double *ig, const double *T,
                       const double *P, const double *xs, const int *code, int vshift,
                       double *out)
{
    eos_t e = eos_view(nc, par);
    ig_t g = ig_view(nc, ig);
    double *work = malloc((size_t)(8 * nc) * sizeof(double));
    double row[PH_N];
    int i, k;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        phase_one(&e, &g, T[i], P[i], xs + (size_t)i * nc, code ? code[i] : 0, vshift, row, work);
        for (k = 0; k < PH_N; k++) out[(size_t)k * n + i] = row[k];
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* the two neighbouring flashes of CubicEngine._two_phase_derivatives for one state; work
 * 2 nc + PT_WORK(nc) */
static void derivatives_case(const eos_t *e, const ig_t *g, const double *fc, double T, double P,
                             const double *z, const double *K, double h, double dT,
                             double dP_rel, double tol, double *cp, double *jt, double *work)
{
    int nc = e->nc;
    double *x = work, *y = work + nc, *rest = work + 2 * nc;
    double T2 = T + dT, P2 = P * (1.0 + dP_rel), hT, hP, s_, c_, dhdP;
    pt_t r;
    flash_pt_case(e, fc, T2, P, z, K, 2, tol, x, y, &r, rest);
    hs_of_split_case(e, g, T2, P, z, r.nph, r.beta, x, y, 0, &hT, &s_, &c_, rest);
    flash_pt_case(e, fc, T, P2, z, K, 2, tol, x, y, &r, rest);
    hs_of_split_case(e, g, T, P2, z, r.nph, r.beta, x, y, 0, &hP, &s_, &c_, rest);
    *cp = (hT - h) / dT;
    dhdP = (hP - h) / (dP_rel * P);
    *jt = -dhdP / *cp;
}

/* CubicEngine._assemble (the numbers; the caller builds the states) for n cases: out is
 * AS_N x n. Single phase: the properties of the phase (of zs); two phases: h, s, Z, density of
 * the whole from both phases, effective cp and JT coefficient from the neighbouring flashes (as
 * CubicEngine._two_phase_derivatives, K = y/x), cv and w NaN. Per phase: Z, density, h, s, molar mass of
 * the vapour (where beta > 0) and of the liquid (where beta < 1), NaN elsewhere. */
enum {
    AS_H, AS_S, AS_CP, AS_CV, AS_JT, AS_W, AS_Z, AS_DENSITY,
    AS_VZ, AS_VDENSITY, AS_VH, AS_VS, AS_VM, AS_LZ, AS_LDENSITY, AS_LH, AS_LS, AS_LM, AS_N
};

LF_EXPORT int lf_assemble(int n, int nc, const double *par, const double *ig, const double *fc,
                          const double *T, const double *P, const double *zs, const int *nph,
                          const double *beta, const double *xs, const double *ys, int vshift,
                          double dT, double dP_rel, double tol, double *out)
{
    eos_t e = eos_view(nc, par);
    ig_t g = ig_view(nc, ig);
    double *work = malloc((3 * (size_t)nc + PT_WORK(nc)) * sizeof(double));
    double *K = work, *rest = work + nc;
    int i, k;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        size_t o = (size_t)i * nc;
        const double *z = zs + o, *x = xs + o, *y = ys + o;
        double A[PH_N], r[AS_N], b = beta[i];
        int two = nph[i] == 2;
        phase_one(&e, &g, T[i], P[i], two ? y : z, 0, vshift, A, rest);
        r[AS_H] = A[PH_H]; r[AS_S] = A[PH_S]; r[AS_CP] = A[PH_CP]; r[AS_CV] = A[PH_CV];
        r[AS_JT] = A[PH_JT]; r[AS_W] = A[PH_W]; r[AS_Z] = A[PH_Z]; r[AS_DENSITY] = A[PH_DENSITY];
        r[AS_VZ] = r[AS_VDENSITY] = r[AS_VH] = r[AS_VS] = r[AS_VM] = NAN;
        r[AS_LZ] = r[AS_LDENSITY] = r[AS_LH] = r[AS_LS] = r[AS_LM] = NAN;
        if (b > 0.0 || two) {
            r[AS_VZ] = A[PH_Z]; r[AS_VDENSITY] = A[PH_DENSITY]; r[AS_VH] = A[PH_H];
            r[AS_VS] = A[PH_S]; r[AS_VM] = A[PH_M];
        }
        if (b < 1.0 && !two) {
            r[AS_LZ] = A[PH_Z]; r[AS_LDENSITY] = A[PH_DENSITY]; r[AS_LH] = A[PH_H];
            r[AS_LS] = A[PH_S]; r[AS_LM] = A[PH_M];
        }
        if (two) {
            double L[PH_N], v, Mz = 0.0;
            phase_one(&e, &g, T[i], P[i], x, 0, vshift, L, rest);
            r[AS_H] = b * A[PH_H] + (1 - b) * L[PH_H];
            r[AS_S] = b * A[PH_S] + (1 - b) * L[PH_S];
            v = b * A[PH_V] + (1 - b) * L[PH_V];
            for (k = 0; k < nc; k++) Mz += z[k] * g.Ms[k];
            r[AS_Z] = P[i] * v / (e.R * T[i]);
            r[AS_DENSITY] = Mz / v;
            r[AS_LZ] = L[PH_Z]; r[AS_LDENSITY] = L[PH_DENSITY]; r[AS_LH] = L[PH_H];
            r[AS_LS] = L[PH_S]; r[AS_LM] = L[PH_M];
            for (k = 0; k < nc; k++) K[k] = (x[k] > 0.0 && y[k] > 0.0) ? y[k] / x[k] : 1.0;
            derivatives_case(&e, &g, fc, T[i], P[i], z, K, r[AS_H], dT, dP_rel, tol, &r[AS_CP],
                             &r[AS_JT], rest);
            r[AS_CV] = NAN;
            r[AS_W] = NAN;
        }
        for (k = 0; k < AS_N; k++) out[(size_t)k * n + i] = r[k];
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* ---------------------------------------------------------------- P-h / P-s (cubic_fluid.py) */
/* Constants of cubic_fluid.py and flash.py, in this order (native.py builds the block) */
enum {
    SV_MAX_ITER, SV_TRUST_ITERATIONS, SV_LOOSE_TOL, SV_LOOSE_UNTIL_STEP, SV_RESIDUAL_K, SV_TOL_T,
    SV_T_LOW, SV_T_HIGH, SV_FD_STEP, SV_F_TINY_REL, SV_SLOPE_FALLBACK, SV_BRACKET_GROW,
    SV_BRACKET_SHRINK, SV_IG_T_START, SV_IG_STEPS, SV_IG_T_MARGIN, SV_NCFG
};

/* CubicEngine._initial_T for one case */
static double initial_T(const eos_t *e, const ig_t *g, const double *sv, double P, double target,
                        const double *z, int is_s, double *work)
{
    int nc = e->nc, it, k, steps = (int)sv[SV_IG_STEPS];
    double T = sv[SV_IG_T_START], mix = mix_entropy_sum(nc, z);
    double *h0 = work, *s0 = work + nc, *cp0 = work + 2 * nc;
    double Tmin = sv[SV_T_LOW] + sv[SV_IG_T_MARGIN], Tmax = sv[SV_T_HIGH] - sv[SV_IG_T_MARGIN];
    for (it = 0; it < steps; it++) {
        double c = 0.0, f = 0.0;
        ideal_gas(g, nc, e->R, T, is_s ? NULL : h0, is_s ? s0 : NULL, cp0);
        for (k = 0; k < nc; k++) c += z[k] * cp0[k];
        if (!is_s) {
            for (k = 0; k < nc; k++) f += z[k] * h0[k];
            f -= target;
            T = T - f / c;
        } else {
            double s = 0.0;
            for (k = 0; k < nc; k++) s += z[k] * s0[k];
            s = s - e->R * log(P / g->Pref) - e->R * mix;
            T = T - (s - target) * T / c;
        }
        if (T < Tmin) T = Tmin;
        else if (T > Tmax) T = Tmax;
    }
    return T;
}

/* cubic_fluid._bisect */
static double bisect_T(const double *sv, double lo, double hi, double T)
{
    int open_lo = lo <= sv[SV_T_LOW], open_hi = hi >= sv[SV_T_HIGH];
    double mid = 0.5 * (lo + hi);
    if (open_hi && !open_lo) {
        double a = T * sv[SV_BRACKET_GROW], b = 0.5 * (T + hi);
        mid = a < b ? a : b;
    }
    if (open_lo && !open_hi) {
        double a = T * sv[SV_BRACKET_SHRINK], b = 0.5 * (T + lo);
        mid = a > b ? a : b;
    }
    return mid;
}

/* CubicEngine._solve_T_mixture for one case (see its docstring for the strategy).
 * work: 3 nc + PT_WORK(nc) */
static void solve_T_case(const eos_t *e, const ig_t *g, const double *fc, const double *sv,
                         double P, double target, const double *z, int is_s, int has_guess,
                         double Tg, double *T_out, int *ok_out, double *beta_out, double *x,
                         double *y, int *nph_out, double *work)
{
    int nc = e->nc, k, it, max_iter = (int)sv[SV_MAX_ITER], trust_it = (int)sv[SV_TRUST_ITERATIONS];
    double *K = work, *x2 = K + nc, *y2 = x2 + nc, *rest = y2 + nc;
    double T, lo = sv[SV_T_LOW], hi = sv[SV_T_HIGH], prev_T = NAN, prev_f = NAN, beta = 1.0;
    int assume = 0, trust = 1, loose = 1, verified = 0, conv = 0, failed = 0, nph = 1;
    T = has_guess ? Tg : initial_T(e, g, sv, P, target, z, is_s, rest);
    for (k = 0; k < nc; k++) K[k] = 1.0;
    memcpy(x, z, (size_t)nc * sizeof(double));
    memcpy(y, z, (size_t)nc * sizeof(double));
    for (it = 0; it < max_iter && !verified; it++) {
        int check = conv, a = check ? 0 : assume, two, flipped, restart = 0, small_f, done, near;
        double h, s, cp, f, slope, secant, Tn, scale, slope_abs, dTa;
        pt_t r;
        flash_pt_case(e, fc, T, P, z, K, a, loose ? sv[SV_LOOSE_TOL] : fc[FP_LN_TOL], x, y, &r,
                      rest);
        two = r.nph == 2;
        beta = r.beta;
        nph = r.nph;
        if (two)
            for (k = 0; k < nc; k++) K[k] = (x[k] > 0.0 && y[k] > 0.0) ? y[k] / x[k] : 1.0;
        flipped = check && two && (assume != 2);
        verified = check && !flipped;
        if (flipped) {
            /* the trusted single phase was metastable: restart the bracket, test every iterate */
            lo = sv[SV_T_LOW];
            hi = sv[SV_T_HIGH];
            prev_T = prev_f = NAN;
            trust = 0;
            conv = 0;
        }
        if (it == trust_it) {
            restart = trust && !conv && (a == 1);
            if (restart) {
                lo = sv[SV_T_LOW];
                hi = sv[SV_T_HIGH];
                prev_T = prev_f = NAN;
                trust = 0;
            }
        }
        assume = two ? 2 : (trust ? 1 : 0);
        if (verified) break;
        hs_of_split_case(e, g, T, P, z, nph, beta, x, y, is_s, &h, &s, &cp, rest);
        f = (is_s ? s : h) - target;
        /* an iterate that may be metastable says nothing about the bracket */
        if (!restart) {
            if (f < 0.0) lo = T;
            if (f > 0.0) hi = T;
        }
        slope = is_s ? cp / T : cp;
        secant = (f - prev_f) / (T - prev_T);
        if (two && !(isfinite(secant) && secant > 0.0)) {
            double dT = sv[SV_FD_STEP], h2, s2, cp2;
            pt_t r2;
            flash_pt_case(e, fc, T + dT, P, z, K, 2, sv[SV_LOOSE_TOL], x2, y2, &r2, rest);
            hs_of_split_case(e, g, T + dT, P, z, r2.nph, r2.beta, x2, y2, is_s, &h2, &s2, &cp2,
                             rest);
            secant = ((is_s ? s2 : h2) - target - f) / dT;
        }
        if (two) slope = secant;
        Tn = T - f / slope;
        if (!isfinite(Tn) || Tn <= lo || Tn >= hi) Tn = bisect_T(sv, lo, hi, T);
        scale = (isfinite(cp) && cp > 0.0) ? cp : sv[SV_SLOPE_FALLBACK];
        if (is_s) scale = scale / T;
        /* the residual must vanish too: a bracket closing on a jump of h(T) is a failure */
        slope_abs = (isfinite(slope) && slope > 0.0) ? slope : scale;
        small_f = fabs(f) <= sv[SV_RESIDUAL_K] * slope_abs;
        dTa = fabs(Tn - T);
        if (dTa < sv[SV_TOL_T] && !small_f && !restart) failed = 1;
        done = ((dTa < sv[SV_TOL_T] && small_f) || fabs(f) < sv[SV_F_TINY_REL] * scale) && !restart;
        /* a loosely converged split cannot end the iteration: near the answer, tighten it */
        near = (dTa < sv[SV_LOOSE_UNTIL_STEP]) && loose && two;
        if (near) loose = 0;
        done = done && !(near || (loose && two));
        if (restart) Tn = T;
        prev_T = restart ? NAN : T;
        prev_f = restart ? NAN : f;
        if (!done) T = Tn;
        conv = done;
        verified = done && (assume == 2 || !trust);
        if (failed) verified = 1;
    }
    *T_out = T;
    *ok_out = verified && !failed;
    *beta_out = beta;
    *nph_out = nph;
}

/* CubicEngine._solve_T_mixture over n mixtures; Tg may be NULL (ideal-gas start). */
LF_EXPORT int lf_solve_T(int n, int nc, const double *par, const double *ig, const double *fc,
                         const double *sv, const double *P, const double *target,
                         const double *zs, int is_s, const double *Tg, double *T, int *ok,
                         double *beta, double *xs, double *ys, int *nph)
{
    eos_t e = eos_view(nc, par);
    ig_t g = ig_view(nc, ig);
    double *work = malloc((3 * (size_t)nc + PT_WORK(nc)) * sizeof(double));
    int i;
    if (!work) return -1;
    eos_cache(&e);
    for (i = 0; i < n; i++) {
        size_t o = (size_t)i * nc;
        solve_T_case(&e, &g, fc, sv, P[i], target[i], zs + o, is_s, Tg != NULL,
                     Tg ? Tg[i] : 0.0, &T[i], &ok[i], &beta[i], xs + o, ys + o, &nph[i], work);
    }
    eos_release(&e);
    free(work);
    return 0;
}

/* ---------------------------------------------------------------- packaging shim */
#ifdef LETDOWN_WITH_PYTHON_MODULE
static struct PyModuleDef flashkernels_module = {
    PyModuleDef_HEAD_INIT, "_flashkernels",
    "Compiled flash kernels; the functions are loaded with ctypes (letdown.fluid.kernels.native).",
    -1, NULL, NULL, NULL, NULL, NULL
};

PyMODINIT_FUNC PyInit__flashkernels(void)
{
    return PyModule_Create(&flashkernels_module);
}
#endif
