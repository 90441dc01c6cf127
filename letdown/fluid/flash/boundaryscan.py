"""Phase boundaries of the cubic engine by a scan of the stability test: dew and bubble
temperatures and pressures of a batch (pure components from their saturation curves, mixtures by
a grid of stability tests along T or P and bisection of the run that reaches highest). A mixin of
:class:`letdown.fluid.flash.engine.CubicEngine` (it uses the engine's ``eos`` and ``comps``);
split from engine.py along this seam (issue 12: module size). The verified dew and bubble points
of mixtures are :mod:`letdown.fluid.flash.saturation`'s, which use :meth:`BoundaryScan._unstable`.
"""
from __future__ import annotations

import numpy as np

from . import twophase as fl

#: Grid for locating phase boundaries by the stability test.
SAT_GRID_POINTS = 48
#: Lowest temperature searched for dew and bubble points of mixtures [K]: below the triple points
#: of methane (90.7 K) and nitrogen (63.2 K) a natural gas is solid; the cubic equation still finds
#: liquid-liquid splits there (near 45 K above a lean gas's cricondenbar), which are not dew points.
SAT_T_FLOOR = 60.0
#: Bisections of a boundary's bracket.
SAT_BISECTIONS = 48


class BoundaryScan:
    """Boundary scans of :class:`letdown.fluid.flash.engine.CubicEngine` (a mixin)."""

    def saturation_T(self, P, zs, kind):
        """Dew ('dew': highest T with a second phase) or bubble ('bubble': lowest T) temperature."""
        return self._boundary(P, zs, kind, axis="T")

    def saturation_P(self, T, zs, kind):
        """Dew ('dew': lowest P with a second phase) or upper ('bubble': highest P) boundary."""
        return self._boundary(T, zs, kind, axis="P")

    def _unstable(self, T, P, zs):
        pure, ip = fl._pure_index(zs)
        res = np.zeros(T.shape, dtype=bool)
        if (~pure).any():
            i = np.nonzero(~pure)[0]
            st = fl.stability(self.eos, T[i], P[i], zs[i], early_exit=True, cold=False)
            res[i] = st.unstable
        return res

    def _boundary(self, fixed, zs, kind, axis):
        n = fixed.shape[0]
        pure, ip = fl._pure_index(zs)
        out = np.full(n, np.nan)
        if pure.any():
            i = np.nonzero(pure)[0]
            if axis == "T":
                out[i] = fl.pure_saturation_T(self.eos, fixed[i], ip[i])
            else:
                out[i] = fl.pure_saturation_P(self.eos, fixed[i], ip[i])[0]
        m = np.nonzero(~pure)[0]
        if m.size == 0:
            return out
        Tcs = self.comps.Tcs
        if axis == "T":
            lo_v = np.maximum(0.3 * np.min(np.where(zs[m] > 0, Tcs, np.inf), axis=1), SAT_T_FLOOR)
            hi_v = np.full(m.size, 1.6 * np.max(np.where(zs[m] > 0, Tcs, -np.inf), axis=1))
            grid = np.linspace(0.0, 1.0, SAT_GRID_POINTS)[None, :] * (hi_v - lo_v)[:, None] + lo_v[:, None]
        else:
            grid = np.exp(np.linspace(np.log(1e4), np.log(5e7), SAT_GRID_POINTS))[None, :].repeat(m.size, 0)
        G = grid.size // m.size
        fx = np.repeat(fixed[m], G)
        gv = grid.ravel()
        zz = np.repeat(zs[m], G, axis=0)
        if axis == "T":
            uns = self._unstable(gv, fx, zz).reshape(m.size, G)
        else:
            uns = self._unstable(fx, gv, zz).reshape(m.size, G)
        upper = (kind == "dew") if axis == "T" else (kind == "bubble")
        a = np.full(m.size, np.nan)
        b = np.full(m.size, np.nan)
        for r in range(m.size):
            u = np.nonzero(uns[r])[0]
            if u.size == 0:
                continue
            # the two-phase run that reaches highest on the grid: the dew curve at the top in T
            # (the bubble curve at the top in P); its lower end is the other boundary, and a run
            # that reaches the end of the grid has no boundary there
            top = u[-1]
            if upper:
                if top + 1 < G:
                    a[r], b[r] = grid[r, top], grid[r, top + 1]     # a unstable, b stable
            else:
                stable_below = np.nonzero(~uns[r, :top])[0]
                if stable_below.size:
                    k = stable_below[-1] + 1
                    a[r], b[r] = grid[r, k], grid[r, k - 1]
        ok = np.isfinite(a)
        for _ in range(SAT_BISECTIONS):
            if not ok.any():
                break
            mid = 0.5 * (a + b) if axis == "T" else np.sqrt(a * b)
            j = np.nonzero(ok)[0]
            if axis == "T":
                u = self._unstable(mid[j], fixed[m[j]], zs[m[j]])
            else:
                u = self._unstable(fixed[m[j]], mid[j], zs[m[j]])
            a[j] = np.where(u, mid[j], a[j])
            b[j] = np.where(u, b[j], mid[j])
        out[m] = np.where(ok, 0.5 * (a + b) if axis == "T" else np.sqrt(a * b), np.nan)
        return out
