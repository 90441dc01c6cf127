"""Stability of mixture states on GERG-2008: the tangent-plane test (Michelsen 1982) on the
model itself, with chemical potentials from composition derivatives of its Helmholtz energy, and
the window above a composition's Peng-Robinson envelope where that test is skipped (the
Peng-Robinson test still runs on every state). A mix-in of :class:`letdown.fluid.eos.gerg.GergEngine`
(it uses the engine's binding ``_g``, ``_aga``, ``_attrs``, ``_set``, ``_roots``, its Peng-Robinson
guard ``_guard`` and its caches); see :mod:`letdown.fluid.eos.gerg` for the whole method.
"""
from __future__ import annotations

import math

import numpy as np

from ..flash import twophase as fl
from .gerg_binding import R_GERG

#: Tangent-plane test on GERG-2008: composition step of the central differences [-], iterations of
#: successive substitution, convergence on ln w, the trivial-solution distance and the threshold
#: below which the tangent-plane distance proves instability [-]. The differences carry a noise of
#: order 1e-10 RT (measured on a 10-component gas), far inside the threshold.
TPD_EPS = 1e-5
TPD_MAX_ITER = 150
TPD_TOL = 1e-9
TPD_TRIVIAL = 1e-5
TPD_UNSTABLE = -1e-7
#: Smallest trial-phase fraction kept (keeps ln w finite) [-].
TPD_W_MIN = 1e-300
#: Water-rich trial phase (mole fraction of water in it) for gases with water.
TPD_WATER_TRIAL = 0.999
#: Where the GERG-2008 tangent-plane test is skipped as unneeded (the Peng-Robinson test still
#: runs on every state): T at or above SKIP_T_MIN and at or above either
#: * the Peng-Robinson cricondentherm of the composition plus SKIP_MARGIN_K, or
#: * the highest temperature of its Peng-Robinson phase envelope at pressures within a factor
#:   exp(SKIP_WINDOW_LNP) of P, plus SKIP_MARGIN_K (above the cricondenbar times that factor, the
#:   envelope has no point in the window and the bound is SKIP_T_MIN).
#: The envelope is the composition's own (the fluid's interaction parameters). Measured against
#: CoolProp's GERG-2008 mixture envelopes of six gases (lean, with butanes to hexane, CO2-rich,
#: nitrogen-rich; tests/fluid/test_gerg_speed.py): every GERG-2008 envelope point lies at most 4.2 K
#: above the highest Peng-Robinson point within that pressure window, and the GERG-2008
#: cricondenbar at most 4 % above Peng-Robinson's; outside the GERG-2008 envelope a mixture has no
#: vapour-liquid split. The margin is more than twice the largest difference measured.
#: SKIP_T_MIN keeps the full test wherever a cold liquid-liquid split may sit outside the
#: vapour-liquid envelope (the fuzz sweep of issue 11 found such splits of CO2-rich and sour gases
#: at 150-215 K). Gases with water always get the full test (GERG-2008's water and the cubic's
#: water dew points are not compared here), and so do compositions whose envelope does not trace
#: completely (``Envelope.converged``) and pressures below the envelope's first point times the
#: window factor (the cricondentherm bound still applies there).
SKIP_MARGIN_K = 10.0
SKIP_T_MIN = 220.0
SKIP_WINDOW_LNP = float(np.log(1.3))
#: States of one composition given the full test before its envelope is traced (a trace costs
#: about as much as 20-40 full tests; one-off compositions never pay for it) [-].
SKIP_AFTER = 8
#: Compositions whose cricondentherm is kept per engine.
SKIP_CACHE_SIZE = 256


class GergStability:
    """The mixture stability test of :class:`letdown.fluid.eos.gerg.GergEngine`."""

    def _a_rest(self, n, RT, d0):
        """Helmholtz energy of the moles ``n`` (a list, sum near 1) in the volume 1/d0 [dm3],
        less the ideal mixing term R T sum n_i ln x_i [J]: a = g - z R T from the binding at the
        density sum(n) d0 (no root search). Plain floats: this is the innermost call of the
        tangent-plane test."""
        N = math.fsum(n)
        c = self._aga.Composition()
        mix = 0.0
        for attr, v in zip(self._attrs, n):
            x = v / N
            setattr(c, attr, x)
            if x > 0.0:
                mix += x * math.log(x)
        g = self._g
        g.set_composition(c)
        self._last = None                 # the binding's composition is no longer self._z
        g.d = N * d0
        g.calc_properties()
        return N * (g.g - g.z * RT - RT * mix)

    def _mu_rest(self, x, T, P):
        """Chemical potentials less R T ln x_i, divided by R T [-], on the stable root at x
        (None where there is none).

        mu_i = (dA/dn_i) at constant T and V, by central differences of the Helmholtz energy in
        the stable root's volume (forward differences for fractions below twice the step): one
        density solve per composition, the neighbours need property calls only. The ideal mixing
        term is taken out before differencing and R T ln x_i put back analytically. (Before:
        a density solve at each neighbour at constant T and P; same values to about 2e-8.)"""
        self._set(x)
        a, b = self._roots(T, P)
        if a is None and b is None:
            return None
        r = b if (a is None or (b is not None and b.g < a.g)) else a
        d0 = r.d
        xs = [float(v) for v in x]
        RT = R_GERG * float(T)
        e = TPD_EPS
        A0 = None
        D = np.empty(len(xs))
        for i, xi in enumerate(xs):
            n = list(xs)
            n[i] = xi + e
            Ap = self._a_rest(n, RT, d0)
            if xi > 2.0 * e:
                n[i] = xi - e
                D[i] = (Ap - self._a_rest(n, RT, d0)) / (2.0 * e)
            else:
                if A0 is None:
                    A0 = self._a_rest(xs, RT, d0)
                D[i] = (Ap - A0) / e
        if not np.all(np.isfinite(D)):
            return None
        return D / RT

    def _unstable_gerg(self, T, P, z):
        """Tangent-plane stability test on GERG-2008 (Michelsen 1982): True where a trial phase
        has a negative tangent-plane distance."""
        on = z > 0
        zc = z[on]
        zf = z.copy()
        rz = self._mu_rest(zf, T, P)
        if rz is None:
            return False
        d = np.log(zc) + rz[on]
        K = fl.wilson_K(self._guard, np.array([T]), np.array([P]))[0][on]
        trials = [zc * K, zc / K]
        if self._iw is not None and on[self._iw]:
            w = np.full(zc.size, (1.0 - TPD_WATER_TRIAL) / max(zc.size - 1, 1))
            w[np.nonzero(on)[0].tolist().index(self._iw)] = TPD_WATER_TRIAL
            trials.append(w)
        for w in trials:
            w = w / w.sum()
            prev = None
            for it in range(TPD_MAX_ITER):
                x = np.zeros_like(z)
                x[on] = w
                rw = self._mu_rest(x, T, P)
                if rw is None:
                    break
                lnW = d - rw[on]
                tm = float(np.sum(w * (np.log(w) + rw[on] - d)))
                if tm < TPD_UNSTABLE:
                    return True
                if not np.all(np.isfinite(lnW)):
                    break
                lnW = lnW - lnW.max()                     # scale: only w = W / sum W is used
                wn = np.exp(lnW)
                wn = np.maximum(wn / wn.sum(), TPD_W_MIN)
                wn = wn / wn.sum()
                if np.sum((np.log(wn) - np.log(zc)) ** 2) < TPD_TRIVIAL:
                    break
                step = np.log(wn) - np.log(w)
                if np.max(np.abs(step)) < TPD_TOL:
                    break
                if prev is not None and (it + 1) % fl.ACCELERATE_EVERY == 0:
                    wn = self._accelerate(wn, step, prev)
                prev = step
                w = wn
        return False

    @staticmethod
    def _accelerate(wn, step, prev):
        """Dominant-eigenvalue extrapolation (GDEM, Crowe & Nishio 1975) of the successive
        substitution on ln w, with the PT flash's limits (eigenvalue below GDEM_MAX_LAMBDA, ln w
        moved by at most GDEM_MAX_STEP): the slow approach to the trivial solution near a phase
        boundary takes 2-5 times fewer chemical-potential evaluations."""
        lam = float(step @ prev) / float(prev @ prev)
        if not (0.0 < lam < fl.GDEM_MAX_LAMBDA):
            return wn
        ext = step * (lam / (1.0 - lam))
        big = float(np.max(np.abs(ext)))
        if big > fl.GDEM_MAX_STEP:
            ext *= fl.GDEM_MAX_STEP / big
        lw = np.log(wn) + ext
        w = np.exp(lw - lw.max())
        w = np.maximum(w / w.sum(), TPD_W_MIN)
        return w / w.sum()

    def _unstable(self, T, P, zs):
        """True where a mixture state is unstable by either test (GERG-2008, Peng-Robinson)."""
        pure, _ = fl._pure_index(zs)
        out = np.zeros(T.shape, dtype=bool)
        i = np.nonzero(~pure)[0]
        if i.size == 0:
            return out
        out[i] = fl.stability(self._guard, T[i], P[i], zs[i], early_exit=True).unstable
        rest = i[~out[i]]
        t_skip = self._skip_T(T[rest], P[rest], zs[rest])
        for k, ts in zip(rest, t_skip):
            if T[k] >= ts:
                continue            # above the envelope with a margin: no split at any pressure
            out[k] = self._unstable_gerg(T[k], P[k], zs[k])
        return out

    def _skip_T(self, T, P, zs):
        """Per state, the temperature at and above which the GERG-2008 tangent-plane test is
        skipped (see SKIP_MARGIN_K); inf where it never is."""
        out = np.full(T.shape[0], np.inf)
        if T.shape[0] == 0:
            return out
        keys = [z.tobytes() for z in np.ascontiguousarray(zs, dtype=float)]
        for key in dict.fromkeys(keys):
            rows = np.array([k for k, kk in enumerate(keys) if kk == key])
            z = zs[rows[0]]
            if self._iw is not None and z[self._iw] > 0.0:
                continue
            if key not in self._ct_cache:
                count = self._ct_count.get(key, 0) + int(np.sum(T[rows] >= SKIP_T_MIN))
                if count < SKIP_AFTER:
                    self._ct_count[key] = count
                    continue
                self._ct_count.pop(key, None)
                if len(self._ct_cache) >= SKIP_CACHE_SIZE:
                    self._ct_cache.clear()
                self._ct_cache[key] = self._envelope_bound(z)
            env = self._ct_cache[key]
            if env is not None:
                out[rows] = self._bound(env, P[rows])
        if len(self._ct_count) >= SKIP_CACHE_SIZE:
            self._ct_count.clear()
        return out

    @staticmethod
    def _bound(env, P):
        """The skip temperature at pressures P from an envelope summary (see SKIP_MARGIN_K)."""
        ct, lnP_cb, lnP_first, Te, lnPe = env
        lnP = np.log(P)
        near = np.abs(lnPe[None, :] - lnP[:, None]) <= SKIP_WINDOW_LNP
        with np.errstate(invalid="ignore"):
            local = np.max(np.where(near, Te[None, :], -np.inf), axis=1) + SKIP_MARGIN_K
        local = np.where(lnP >= lnP_cb + SKIP_WINDOW_LNP, -np.inf, local)
        local = np.where(lnP <= lnP_first + SKIP_WINDOW_LNP, np.inf, local)
        return np.maximum(np.minimum(ct + SKIP_MARGIN_K, local), SKIP_T_MIN)

    def _envelope_bound(self, z):
        """(cricondentherm [K], ln cricondenbar, ln P of the first point, T and ln P of every
        point) of z's Peng-Robinson phase envelope; None where the envelope does not trace
        completely or its extrema are not its largest values."""
        from ...errors import LetdownError
        from ..flash.engine import CubicEngine
        from ..flash.envelope import phase_envelope
        try:
            with np.errstate(all="ignore"):
                env = phase_envelope(CubicEngine(self.comps, self._guard, False), z)
        except (LetdownError, ValueError, ArithmeticError, FloatingPointError):
            return None
        if not env.converged or env.cricondentherm is None or env.cricondenbar is None:
            return None
        Te = np.append(env.T, [env.cricondentherm.T, env.cricondenbar.T])
        Pe = np.append(env.P, [env.cricondentherm.P, env.cricondenbar.P])
        ct, cb = float(env.cricondentherm.T), float(env.cricondenbar.P)
        if not (np.all(np.isfinite(Te)) and np.all(Pe > 0) and ct >= Te.max() - 1e-6
                and cb >= Pe.max() * (1.0 - 1e-9)):
            return None
        return ct, np.log(cb), float(np.log(Pe.min())), Te, np.log(Pe)
