/* Compiled kernels for the hot loops of the cubic-EOS flash (letdown.fluid.flash).
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
    return e;
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

/* ---------------------------------------------------------------- cubic EOS (cubic.py) */
/* CubicEOS.mix: a, b and psi_i = sum_j x_j a_ij; work needs 2 nc doubles */
static void mixture(const eos_t *e, double T, const double *x, double *psi, double *a, double *b,
                    double *work)
{
    int nc = e->nc, i, j;
    double sT = sqrt(T), aa = 0.0, bb = 0.0;
    double *r = work, *xr = work + nc;
    for (i = 0; i < nc; i++) {
        r[i] = e->sqrt_ac[i] * (1.0 + e->ms[i] * (1.0 - sT / e->sqrt_Tc[i]));
        xr[i] = x[i] * r[i];
    }
    for (j = 0; j < nc; j++) {
        double S = 0.0;
        for (i = 0; i < nc; i++) S += xr[i] * e->omk[i * nc + j];
        psi[j] = r[j] * S;
    }
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
    {
        int differ = Zmax - Zmin > e->distinct * Zmax;
        double gmin = g_res_RT(e, Zmin, A, B);
        double gmax = g_res_RT(e, Zmax, A, B);
        return (differ && gmin < gmax) ? Zmin : Zmax;
    }
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
    for (i = 0; i < n; i++)
        Z[i] = lnphi_one(&e, T[i], P[i], xs + (size_t)i * nc, code ? code[i] : 0,
                         lnphi + (size_t)i * nc, work);
    free(work);
    return 0;
}

/* ---------------------------------------------------------------- stability (flash.stability) */
/* cfg: [0] LN_TOL, [1] TRIVIAL_DIST, [2] STABILITY_MAX_ITER, [3] early-exit tm threshold */
enum { ST_LN_TOL, ST_TRIVIAL_DIST, ST_MAX_ITER, ST_EARLY_TM, ST_NCFG };

/* One trial phase: iterate ln W in place; returns tm (0 for a trivial trial), sets *Zw. */
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

/* Stability test of n feeds at (T, P) with ln phi of the feed lnphis_z and Wilson K-values K
 * (n x nc): trials z K, z / K, nearly pure heaviest and nearly pure lightest component present.
 * Output per feed: the most negative tm, the composition of that trial and its Z. */
LF_EXPORT int lf_stability(int n, int nc, const double *par, const double *T, const double *P,
                           const double *zs, const double *lnphis_z, const double *K,
                           const double *cfg, int early_exit, double *tm_out, double *ws_out,
                           double *Z_out)
{
    eos_t e = eos_view(nc, par);
    const int nt = 4;
    double *buf = malloc((size_t)(7 * nc + nt * nc) * sizeof(double));
    double *d, *work, *lnW;
    int i, k, t;
    if (!buf) return -1;
    d = buf;
    work = buf + nc;            /* 6 nc */
    lnW = buf + 7 * nc;         /* nt x nc */
    for (i = 0; i < n; i++) {
        const double *z = zs + (size_t)i * nc, *Ki = K + (size_t)i * nc;
        const double *lz = lnphis_z + (size_t)i * nc;
        double tms[4], Zs[4], best_tm, sW = 0.0;
        int heavy = 0, light = 0, best = 0;
        double hv = -INFINITY, lv = INFINITY;
        for (k = 0; k < nc; k++) {
            int pres = z[k] > 0.0;
            d[k] = pres ? log(z[k]) + lz[k] : -INFINITY;
            if (pres && e.Tcs[k] > hv) { hv = e.Tcs[k]; heavy = k; }
            if (pres && e.Tcs[k] < lv) { lv = e.Tcs[k]; light = k; }
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
            tms[t] = stability_trial(&e, T[i], P[i], z, d, lw, cfg, early_exit, &Zs[t], work);
        }
        /* first minimum; a NaN wins (as numpy's argmin) */
        best_tm = tms[0];
        for (t = 1; t < nt && !isnan(best_tm); t++)
            if (isnan(tms[t]) || tms[t] < best_tm) { best_tm = tms[t]; best = t; }
        for (k = 0; k < nc; k++) {
            ws_out[(size_t)i * nc + k] = exp(lnW[best * nc + k]);
            sW += ws_out[(size_t)i * nc + k];
        }
        for (k = 0; k < nc; k++) ws_out[(size_t)i * nc + k] /= sW;
        tm_out[i] = best_tm;
        Z_out[i] = Zs[best];
    }
    free(buf);
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
            double den = 1.0 + beta * Km1[k];
            double t = z[k] * Km1[k] / den;
            f += t;
            df += t * Km1[k] / den;
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

/* Successive substitution of flash.two_phase_flash for n cases from K-values Ks. Output: lnK
 * (n x nc), beta (last Rachford-Rice solution), conv, iters, resid. */
LF_EXPORT int lf_two_phase_ss(int n, int nc, const double *par, const double *T, const double *P,
                              const double *zs, const double *Ks, const double *cfg, double *lnK_out,
                              double *beta_out, int *conv_out, int *iters_out, double *resid_out)
{
    eos_t e = eos_view(nc, par);
    int max_iter = (int)cfg[TP_MAX_ITER], every = (int)cfg[TP_ACCEL_EVERY];
    double *buf = malloc((size_t)(16 * nc) * sizeof(double));
    double *K, *Km1, *x, *y, *lx, *ly, *work, *hist, *step;
    int i, k;
    if (!buf) return -1;
    K = buf; Km1 = K + nc; x = Km1 + nc; y = x + nc; lx = y + nc; ly = lx + nc;
    work = ly + nc;         /* 3 nc */
    hist = work + 3 * nc;   /* 4 nc */
    step = hist + 4 * nc;   /* nc */
    for (i = 0; i < n; i++) {
        const double *z = zs + (size_t)i * nc;
        double *lnK = lnK_out + (size_t)i * nc;
        double beta = NAN, resid = INFINITY;
        int conv = 0, iters = 0, it, nh = 0;
        for (k = 0; k < nc; k++) lnK[k] = (z[k] > 0.0) ? log(Ks[(size_t)i * nc + k]) : 0.0;
        for (it = 0; it < max_iter && !conv; it++) {
            double err = 0.0, b;
            int nan_err = 0;
            for (k = 0; k < nc; k++) {
                K[k] = exp(lnK[k]);
                Km1[k] = K[k] - 1.0;
            }
            b = rr_negative(nc, z, K, Km1, beta, cfg);
            phase_compositions(nc, z, K, b, x, y);
            lnphi_one(&e, T[i], P[i], x, 0, lx, work);
            lnphi_one(&e, T[i], P[i], y, 0, ly, work);
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
        beta_out[i] = beta;
        conv_out[i] = conv;
        iters_out[i] = iters;
        resid_out[i] = resid;
    }
    free(buf);
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
    free(buf);
    return 0;
}

/* ---------------------------------------------------------------- properties */
/* CubicEOS.properties for n phases; out is 9 x n, rows Z, v, h_res, s_res, cv_res, dPdT, dPdv,
 * g_res_RT, c_shift. code may be NULL (lowest Gibbs energy). */
LF_EXPORT int lf_properties(int n, int nc, const double *par, const double *T, const double *P,
                            const double *xs, const int *code, double *out)
{
    eos_t e = eos_view(nc, par);
    double *buf = malloc((size_t)(3 * nc) * sizeof(double));
    double *r, *rp, *rpp;
    int i, j, k;
    if (!buf) return -1;
    r = buf; rp = r + nc; rpp = rp + nc;
    for (i = 0; i < n; i++) {
        const double *x = xs + (size_t)i * nc;
        double Ti = T[i], Pi = P[i], sT = sqrt(Ti);
        double a = 0.0, b = 0.0, da = 0.0, d2a1 = 0.0, d2a2 = 0.0, d2a, cshift = 0.0;
        double RT, A, B, Z, v, L, bdd, v1, v2;
        for (k = 0; k < nc; k++) {
            r[k] = e.sqrt_ac[k] * (1.0 + e.ms[k] * (1.0 - sT / e.sqrt_Tc[k]));
            rp[k] = -e.sqrt_ac[k] * e.ms[k] / (2.0 * sT * e.sqrt_Tc[k]);
            rpp[k] = e.sqrt_ac[k] * e.ms[k] / (4.0 * sT * sT * sT * e.sqrt_Tc[k]);
        }
        for (j = 0; j < nc; j++) {
            double S = 0.0, Sp = 0.0;
            for (k = 0; k < nc; k++) {
                S += x[k] * r[k] * e.omk[k * nc + j];
                Sp += x[k] * rp[k] * e.omk[k * nc + j];
            }
            a += x[j] * r[j] * S;
            da += x[j] * rp[j] * S;
            d2a1 += x[j] * rpp[j] * S;
            d2a2 += x[j] * rp[j] * Sp;
            b += x[j] * e.bs[j];
            cshift += x[j] * e.cs[j];
        }
        da *= 2.0;
        d2a = 2.0 * (d2a1 + d2a2);
        RT = e.R * Ti;
        A = a * Pi / (RT * RT);
        B = b * Pi / RT;
        Z = choose_root(&e, A, B, code ? code[i] : 0);
        v = Z * RT / Pi;
        L = log((Z + e.d1 * B) / (Z + e.d2 * B));
        bdd = b * e.dd;
        v1 = v + e.d1 * b;
        v2 = v + e.d2 * b;
        out[i] = Z;
        out[n + i] = v;
        out[2 * (size_t)n + i] = RT * (Z - 1.0) + (Ti * da - a) / bdd * L;
        out[3 * (size_t)n + i] = e.R * log(Z - B) + da / bdd * L;
        out[4 * (size_t)n + i] = Ti * d2a / bdd * L;
        out[5 * (size_t)n + i] = e.R / (v - b) - da / (v1 * v2);
        out[6 * (size_t)n + i] = -RT / ((v - b) * (v - b)) + a * (2.0 * v + e.u * b) / ((v1 * v2) * (v1 * v2));
        out[7 * (size_t)n + i] = Z - 1.0 - log(Z - B) - A / (B * e.dd) * L;
        out[8 * (size_t)n + i] = cshift;
    }
    free(buf);
    return 0;
}

/* ---------------------------------------------------------------- packaging shim */
#ifdef LETDOWN_WITH_PYTHON_MODULE
static struct PyModuleDef flashkernels_module = {
    PyModuleDef_HEAD_INIT, "_flashkernels",
    "Compiled flash kernels; the functions are loaded with ctypes (letdown.fluid.native).",
    -1, NULL, NULL, NULL, NULL, NULL
};

PyMODINIT_FUNC PyInit__flashkernels(void)
{
    return PyModule_Create(&flashkernels_module);
}
#endif
