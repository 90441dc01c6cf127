"""Compiled flash kernels (``_flashkernels.c``), loaded with ctypes; numpy is the fallback.

The C file is built at install time as the extension module ``letdown.fluid._flashkernels`` (see
``setup.py``); its functions are plain C entry points loaded from that module's file with ctypes, so
no compiled code is imported unless a flash runs. Each kernel reproduces the numpy code it stands in
for, case by case, with the constants passed in from :mod:`letdown.fluid.flash` and
:mod:`letdown.fluid.cubic` (one source of truth):

* :func:`lnphi` -- :meth:`CubicEOS.lnphi <letdown.fluid.cubic.CubicEOS.lnphi>` (mixture parameters,
  analytic roots, root choice, ln phi);
* :func:`stability_trials` -- the trial iterations of :func:`letdown.fluid.flash.stability`;
* :func:`two_phase_ss` -- the successive-substitution loop of
  :func:`letdown.fluid.flash.two_phase_flash`;
* :func:`split_finish` -- its final Rachford-Rice solve, phase compositions and phase Z;
* :func:`properties` -- :meth:`CubicEOS.properties <letdown.fluid.cubic.CubicEOS.properties>`.

``AVAILABLE`` is False (and every caller keeps to numpy) when the compiled module is missing or the
environment variable ``LETDOWN_PURE_NUMPY`` is set to ``1``.
"""
from __future__ import annotations

import ctypes
import importlib.util
import os
import weakref

import numpy as np

from .components import R

#: Relative separation below which the two cubic roots count as one, as in CubicEOS.choose_root.
ROOT_DISTINCT_REL = 1e-12
#: Literals of the numpy code, passed to the kernels: the early-exit tangent-plane distance of
#: flash.stability, the ln K below which flash.two_phase_flash calls a split trivial, and the
#: agreement of the two eigenvalue estimates that flash._gdem requires (relative).
EARLY_EXIT_TM = -1e-6
TRIVIAL_LNK = 1e-4
GDEM_AGREE = 0.05
#: Length of the header of the parameter block (see the C file).
_HEADER = 8


def _load():
    if os.environ.get("LETDOWN_PURE_NUMPY", "") == "1":
        return None
    try:
        spec = importlib.util.find_spec("letdown.fluid._flashkernels")
    except (ImportError, ValueError):
        return None
    if spec is None or not spec.origin or not os.path.isfile(spec.origin):
        return None
    try:
        lib = ctypes.CDLL(spec.origin)
    except OSError:
        return None
    p, i = ctypes.c_void_p, ctypes.c_int
    sigs = {
        "lf_lnphi": [i, i, p, p, p, p, p, p, p],
        "lf_stability": [i, i, p, p, p, p, p, p, p, i, p, p, p],
        "lf_two_phase_ss": [i, i, p, p, p, p, p, p, p, p, p, p, p],
        "lf_split_finish": [i, i, p, p, p, p, p, p, p, p, p, p, p],
        "lf_properties": [i, i, p, p, p, p, p, p],
    }
    try:
        for name, args in sigs.items():
            fn = getattr(lib, name)
            fn.argtypes = args
            fn.restype = i
    except AttributeError:
        return None
    return lib


_LIB = _load()
#: True when the compiled kernels are in use.
AVAILABLE = _LIB is not None

_PACKS: "weakref.WeakKeyDictionary" = weakref.WeakKeyDictionary()


def _pack(eos):
    """Parameter block of one CubicEOS (cached per object; the EOS is immutable)."""
    par = _PACKS.get(eos)
    if par is None:
        from .cubic import ROOT_POLISH_STEPS
        c = eos.comps
        head = np.zeros(_HEADER)
        head[:5] = (R, eos.d1, eos.d2, ROOT_DISTINCT_REL, ROOT_POLISH_STEPS)
        par = np.ascontiguousarray(np.concatenate([
            head, eos.sqrt_ac, eos.ms, eos.sqrt_Tc, eos.bs, c.Tcs, c.Pcs, c.omegas,
            np.asarray(eos.omk, dtype=float).ravel(), eos.cs]), dtype=np.float64)
        _PACKS[eos] = par
    return par


def _f(a):
    return np.ascontiguousarray(a, dtype=np.float64)


_byref = ctypes.byref
_char_at = ctypes.c_char.from_buffer


def _ptr(a):
    """Address of a contiguous array's data (by a ctypes reference: cheaper than ``a.ctypes``)."""
    try:
        return _byref(_char_at(a))
    except (TypeError, ValueError):      # read-only or empty array
        return a.ctypes.data


def _check(rc):
    if rc != 0:
        raise MemoryError("flash kernel could not allocate its work space")


_CODES = {"vapour": 1, "liquid": -1, "stable": 0}


def _codes(code, n):
    """Root codes as an int32 array and its pointer (None: lowest Gibbs energy everywhere)."""
    if code is None or (isinstance(code, str) and code == "stable"):
        return None, None
    if isinstance(code, str):
        code = np.full(n, _CODES[code], dtype=np.int32)
    else:
        code = np.asarray(code)
        code = np.ascontiguousarray(code if code.shape == (n,) else np.broadcast_to(code, (n,)),
                                    dtype=np.int32)
    return code, _ptr(code)


def lnphi(eos, T, P, xs, code=None):
    """ln phi (n, nc) and Z (n,) as :meth:`CubicEOS.lnphi`; ``code`` as its ``phase`` ('vapour',
    'liquid', 'stable' or an int array: +1 largest root, -1 smallest, 0 lowest Gibbs energy), None
    for the lowest Gibbs energy everywhere."""
    T, P, xs = _f(T), _f(P), _f(xs)
    n, nc = xs.shape
    out = np.empty((n, nc))
    Z = np.empty(n)
    code, cp = _codes(code, n)
    _check(_LIB.lf_lnphi(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                         _ptr(xs), cp, _ptr(out), _ptr(Z)))
    return out, Z


def stability_trials(eos, T, P, zs, lnphis_z, K, *, ln_tol, trivial_dist, max_iter, early_tm,
                     early_exit):
    """Trial iterations of the stability test (see :func:`letdown.fluid.flash.stability`).

    Returns
    -------
    tm : (n,) most negative modified tangent-plane distance [-]
    ws : (n, nc) that trial's composition [-]
    Z : (n,) that trial's compressibility factor [-]
    """
    T, P, zs, lnphis_z, K = _f(T), _f(P), _f(zs), _f(lnphis_z), _f(K)
    n, nc = zs.shape
    cfg = np.array([ln_tol, trivial_dist, max_iter, early_tm], dtype=np.float64)
    tm = np.empty(n)
    ws = np.empty((n, nc))
    Z = np.empty(n)
    _check(_LIB.lf_stability(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                             _ptr(zs), _ptr(lnphis_z), _ptr(K), _ptr(cfg),
                             1 if early_exit else 0, _ptr(tm), _ptr(ws),
                             _ptr(Z)))
    return tm, ws, Z


def _tp_cfg(tol, max_iter, accelerate_every, gdem_max_lambda, gdem_max_step, gdem_agree,
            trivial_lnK, rr_tol, rr_max_iter, neg_bounds):
    # order as the TP_* enumeration in the C file
    return np.array([tol, max_iter, accelerate_every, gdem_max_lambda, gdem_max_step, gdem_agree,
                     trivial_lnK, rr_tol, rr_max_iter, neg_bounds[0], neg_bounds[1]],
                    dtype=np.float64)


def two_phase_ss(eos, T, P, zs, Ks, **cfg):
    """Successive substitution of the two-phase flash (see
    :func:`letdown.fluid.flash.two_phase_flash`); keyword arguments are the constants of
    :func:`_tp_cfg`.

    Returns
    -------
    lnK (n, nc), beta (n,), converged (n,) bool, iterations (n,) int, residual (n,)
    """
    T, P, zs, Ks = _f(T), _f(P), _f(zs), _f(Ks)
    n, nc = zs.shape
    c = _tp_cfg(**cfg)
    lnK = np.empty((n, nc))
    beta = np.empty(n)
    conv = np.empty(n, dtype=np.int32)
    iters = np.empty(n, dtype=np.int32)
    resid = np.empty(n)
    _check(_LIB.lf_two_phase_ss(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                                _ptr(zs), _ptr(Ks), _ptr(c), _ptr(lnK),
                                _ptr(beta), _ptr(conv), _ptr(iters),
                                _ptr(resid)))
    return lnK, beta, conv.astype(bool), iters.astype(int), resid


def split_finish(eos, T, P, zs, lnK, **cfg):
    """Negative-flash vapour fraction (no warm start), phase compositions and the lowest-Gibbs Z
    of both phases from ln K.

    Returns
    -------
    beta (n,), xs (n, nc), ys (n, nc), Zx (n,), Zy (n,)
    """
    T, P, zs, lnK = _f(T), _f(P), _f(zs), _f(lnK)
    n, nc = zs.shape
    c = _tp_cfg(**cfg)
    beta = np.empty(n)
    xs = np.empty((n, nc))
    ys = np.empty((n, nc))
    Zx = np.empty(n)
    Zy = np.empty(n)
    _check(_LIB.lf_split_finish(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                                _ptr(zs), _ptr(lnK), _ptr(c), _ptr(beta),
                                _ptr(xs), _ptr(ys), _ptr(Zx), _ptr(Zy)))
    return beta, xs, ys, Zx, Zy


_PROPERTY_ROWS = ("Z", "v", "h_res", "s_res", "cv_res", "dPdT", "dPdv", "g_res_RT", "c_shift")


def properties(eos, T, P, xs, code=None):
    """Residual and derivative properties of phases, as :meth:`CubicEOS.properties` (same keys and
    units); ``code`` as in :func:`lnphi`."""
    T, P, xs = _f(T), _f(P), _f(xs)
    n, nc = xs.shape
    out = np.empty((len(_PROPERTY_ROWS), n))
    code, cp = _codes(code, n)
    _check(_LIB.lf_properties(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                              _ptr(xs), cp, _ptr(out)))
    return dict(zip(_PROPERTY_ROWS, out))
