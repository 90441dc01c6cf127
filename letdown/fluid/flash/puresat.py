"""Saturation temperature and pressure of pure components on a cubic equation of state (equal
fugacity of the vapour and liquid roots, Newton on the Wilson estimate), vectorised over cases.
Split from :mod:`letdown.fluid.flash.twophase` along this seam (issue 12: module size); the names
are still importable from there.
"""
from __future__ import annotations

import numpy as np

from ..eos.cubic import CubicEOS
from ..components import R
from .stability import WILSON_C

PURE_SAT_MAX_ITER = 60
PURE_SAT_TOL = 1e-12


def _pure_zs(nc, ip):
    z = np.zeros((ip.size, nc))
    z[np.arange(ip.size), ip] = 1.0
    return z


def pure_saturation_T(eos: CubicEOS, P, ip):
    """Saturation temperature of pure component ``ip`` at P [K] (NaN at or above Pc).

    Newton on F(T) = ln phi_L - ln phi_V with dF/dT = (h_V - h_L)/(R T^2), safeguarded by a
    bracket [0.3 Tc, Tc].
    """
    c = eos.comps
    Tc, Pc, om = c.Tcs[ip], c.Pcs[ip], c.omegas[ip]
    zs = _pure_zs(c.n, ip)
    ok_range = P < Pc
    Pr = np.where(ok_range, P / Pc, 0.5)
    T = Tc / (1.0 - np.log(Pr) / (WILSON_C * (1.0 + om)))     # Wilson inverse
    T = np.clip(T, 0.35 * Tc, 0.999 * Tc)
    lo = np.full(T.shape, 0.2) * Tc
    hi = Tc.copy()
    conv = ~ok_range
    for _ in range(PURE_SAT_MAX_ITER):
        if conv.all():
            break
        pL = eos.properties(T, P, zs, "liquid")
        pV = eos.properties(T, P, zs, "vapour")
        same = np.abs(pV["Z"] - pL["Z"]) < 1e-9 * pV["Z"]
        # with one root, decide the side by its volume (b = B RT/P; v/b large means vapour)
        vap_only = same & (pV["v"] / (zs @ eos.bs) > 2.0)
        F = (pL["g_res_RT"] - pV["g_res_RT"])
        F = np.where(same, np.where(vap_only, 1.0, -1.0), F)
        lo = np.where(~conv & (F < 0), T, lo)
        hi = np.where(~conv & (F > 0), T, hi)
        dF = (pV["h_res"] - pL["h_res"]) / (R * T * T)
        Tn = np.where(same | (dF <= 0), 0.5 * (lo + hi), T - F / np.where(dF > 0, dF, 1.0))
        Tn = np.where((Tn <= lo) | (Tn >= hi), 0.5 * (lo + hi), Tn)
        done = (np.abs(F) < PURE_SAT_TOL) & ~same
        conv |= done
        T = np.where(conv, T, Tn)
    return np.where(ok_range & conv, T, np.nan)


def pure_saturation_P(eos: CubicEOS, T, ip):
    """Saturation pressure of pure component ``ip`` at T [Pa] (NaN at or above Tc).

    Newton on ln P: d(ln phi_L - ln phi_V)/d ln P = (Z_L - Z_V).
    """
    c = eos.comps
    Tc, Pc, om = c.Tcs[ip], c.Pcs[ip], c.omegas[ip]
    zs = _pure_zs(c.n, ip)
    sub = T < Tc
    lnP = np.log(Pc) + WILSON_C * (1.0 + om) * (1.0 - Tc / np.where(sub, T, 0.5 * Tc))
    lo = np.full(T.shape, np.log(1e-10))
    hi = np.log(Pc)
    conv = ~sub
    for _ in range(PURE_SAT_MAX_ITER):
        if conv.all():
            break
        P = np.exp(lnP)
        pL = eos.properties(T, P, zs, "liquid")
        pV = eos.properties(T, P, zs, "vapour")
        same = np.abs(pV["Z"] - pL["Z"]) < 1e-9 * pV["Z"]
        vap_only = same & (pV["v"] / (zs @ eos.bs) > 2.0)
        F = pL["g_res_RT"] - pV["g_res_RT"]  # ln f_L - ln f_V of the pure component
        F = np.where(same, np.where(vap_only, 1.0, -1.0), F)
        # F > 0: the liquid has the higher fugacity, so the vapour is stable: P is below Psat
        lo = np.where(~conv & (F > 0), lnP, lo)
        hi = np.where(~conv & (F < 0), lnP, hi)
        dF = pL["Z"] - pV["Z"]
        n_ = np.where(same | (dF >= 0), 0.5 * (lo + hi), lnP - F / np.where(dF < 0, dF, -1.0))
        n_ = np.where((n_ <= lo) | (n_ >= hi), 0.5 * (lo + hi), n_)
        done = (np.abs(F) < PURE_SAT_TOL) & ~same
        conv |= done
        lnP = np.where(conv, lnP, n_)
    return np.where(sub & conv, np.exp(lnP), np.nan), conv
