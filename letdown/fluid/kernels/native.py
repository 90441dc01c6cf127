"""Compiled flash kernels (``_flashkernels.c``), loaded with ctypes; numpy is the fallback.

The C file is built at install time as the extension module ``letdown.fluid.kernels._flashkernels`` (see
``setup.py``); its functions are plain C entry points loaded from that module's file with ctypes, so
no compiled code is imported unless a flash runs. Each kernel reproduces the numpy code it stands in
for, case by case, with the constants passed in from :mod:`letdown.fluid.flash.twophase` and
:mod:`letdown.fluid.eos.cubic` (one source of truth):

* :func:`lnphi` -- :meth:`CubicEOS.lnphi <letdown.fluid.eos.cubic.CubicEOS.lnphi>` (mixture parameters,
  analytic roots, root choice, ln phi);
* :func:`stability_trials` -- the trial iterations of :func:`letdown.fluid.flash.twophase.stability`;
* :func:`two_phase_ss` -- the successive-substitution loop of
  :func:`letdown.fluid.flash.twophase.two_phase_flash`;
* :func:`split_finish` -- its final Rachford-Rice solve, phase compositions and phase Z;
* :func:`properties` -- :meth:`CubicEOS.properties <letdown.fluid.eos.cubic.CubicEOS.properties>`;
* :func:`flash_pt` -- the whole :func:`letdown.fluid.flash.twophase.flash_TP` for mixtures;
* :func:`hs_of_split` and :func:`phase` -- the ideal-gas plus residual properties of
  :class:`letdown.fluid.flash.engine.CubicEngine` (``_hs_of_split``, ``_phase``);
* :func:`solve_T` -- the P-h / P-s temperature iteration ``CubicEngine._solve_T_mixture``;
* :func:`assemble` -- the numbers of ``CubicEngine._assemble``.

:meth:`CubicEOS.lnphi` and :meth:`CubicEOS.properties`, :func:`letdown.fluid.flash.twophase.flash_TP` and
the engine's P-h / P-s iteration dispatch here when ``AVAILABLE``.

``AVAILABLE`` is False (and every caller keeps to numpy) when the compiled module is missing, when
the environment variable ``LETDOWN_PURE_NUMPY`` is set to ``1``, or when the library does not match
the C file beside it: another parameter layout (``lf_abi``) or another source (the SHA-256 of the C
file compiled in by ``setup.py``, compared with the file's own hash where the source is present, as in
a checkout or an editable install). ``STATUS`` says which in words; a library that is present but
refused is announced with a :class:`RuntimeWarning` (a stale build would otherwise run old code).

Large batches of :func:`flash_pt` and :func:`solve_T` are cut into chunks that run on a small pool of
threads (ctypes releases the interpreter lock while a kernel runs). Every case is computed on its
own, so the result does not depend on the chunking; ``LETDOWN_FLASH_THREADS`` caps the number of
threads (1: no threads).
"""
from __future__ import annotations

import ctypes
import hashlib
import importlib.util
import os
import warnings
import weakref

import numpy as np

from ..components import R, cold_trial_flags

#: Relative separation below which the two cubic roots count as one, as in CubicEOS.choose_root.
ROOT_DISTINCT_REL = 1e-12
#: Layout version of the parameter blocks the C file must report (``lf_abi``); a library built
#: from an older C file is not used (numpy fallback) rather than read with the wrong layout.
ABI = 2
#: Length of the header of the parameter block and of the ideal-gas block (see the C file).
_HEADER = 8
#: Batches of at least this many cases are spread over threads (below, the hand-over costs more
#: than it saves); each thread takes CHUNKS_PER_THREAD chunks on average, to even out the cost of
#: the two-phase cases.
THREAD_MIN_CASES = 64
CHUNKS_PER_THREAD = 4
#: Order of the flash constants (FP_* in the C file); values from flash.native_flash_constants.
_FP_ORDER = ("ln_tol", "trivial_dist", "stability_max_iter", "early_tm", "ss_max_iter",
             "accelerate_every", "gdem_max_lambda", "gdem_max_step", "gdem_agree", "trivial_lnK",
             "rr_tol", "rr_max_iter", "neg_lo", "neg_hi", "tm_unstable", "wilson_c",
             "newton_max_iter", "newton_fd_step", "newton_max_step", "gibbs_margin_rel", "k_min",
             "k_max", "phase_id_liquid", "vapour_above_tc", "cold_trial_T",
             "distinct_trial_dist")
#: Order of the P-h / P-s constants (SV_* in the C file); values from cubic_fluid.
_SV_ORDER = ("max_iter", "trust_iterations", "loose_tol", "loose_until_step", "residual_K",
             "tol_T", "T_low", "T_high", "fd_step_T", "f_tiny_rel", "slope_fallback",
             "bracket_grow", "bracket_shrink", "ideal_T_start", "ideal_T_steps",
             "ideal_T_margin")


#: The C source beside this module (present in a checkout or an editable install, not in a wheel).
SOURCE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "_flashkernels.c")


def _source_sha256() -> str | None:
    """SHA-256 of the C source beside this module, or None where it is not shipped."""
    try:
        with open(SOURCE, "rb") as f:
            return hashlib.sha256(f.read()).hexdigest()
    except OSError:
        return None


def _load() -> tuple:
    """(library or None, status in words, whether a present library was refused)."""
    if os.environ.get("LETDOWN_PURE_NUMPY", "") == "1":
        return None, "numpy (LETDOWN_PURE_NUMPY=1)", False
    try:
        spec = importlib.util.find_spec("letdown.fluid.kernels._flashkernels")
    except (ImportError, ValueError):
        spec = None
    if spec is None or not spec.origin or not os.path.isfile(spec.origin):
        return None, "numpy (the compiled kernels are not built)", False
    try:
        lib = ctypes.CDLL(spec.origin)
    except OSError as exc:
        return None, f"numpy (the compiled kernels could not be loaded: {exc})", True
    p, i = ctypes.c_void_p, ctypes.c_int
    sigs = {
        "lf_lnphi": [i, i, p, p, p, p, p, p, p],
        "lf_stability": [i, i, p, p, p, p, p, p, p, i, p, p, p, i, p, p, p],
        "lf_two_phase_ss": [i, i, p, p, p, p, p, p, p, p, p, p, p],
        "lf_split_finish": [i, i, p, p, p, p, p, p, p, p, p, p, p],
        "lf_properties": [i, i, p, p, p, p, p, p],
        "lf_flash_pt": [i, i, p, p, p, p, p, p, p, p, p, p, p, p, p, p, p],
        "lf_hs_of_split": [i, i, p, p, p, p, p, p, p, p, p, p, p, p],
        "lf_phase": [i, i, p, p, p, p, p, p, i, p],
        "lf_solve_T": [i, i, p, p, p, p, p, p, p, i, p, p, p, p, p, p, p],
        "lf_assemble": [i, i, p, p, p, p, p, p, p, p, p, p, i, ctypes.c_double, ctypes.c_double,
                        ctypes.c_double, p],
    }
    stale = (f"numpy (the compiled kernels at {spec.origin} were built from another version of "
             "_flashkernels.c; rebuild them with 'pip install -e .')")
    try:
        lib.lf_abi.argtypes = []
        lib.lf_abi.restype = i
        if lib.lf_abi() != ABI:
            return None, stale, True
        lib.lf_source_sha256.argtypes = []
        lib.lf_source_sha256.restype = ctypes.c_char_p
        built_from = lib.lf_source_sha256().decode("ascii")
        source = _source_sha256()
        if source is not None and built_from != source:
            return None, stale, True
        for name, args in sigs.items():
            fn = getattr(lib, name)
            fn.argtypes = args
            fn.restype = i
    except AttributeError:
        return None, stale, True
    return lib, f"compiled kernels ({spec.origin})", False


_LIB, STATUS, _REFUSED = _load()
#: True when the compiled kernels are in use.
AVAILABLE = _LIB is not None
if _REFUSED:
    warnings.warn(f"letdown: flash kernels: {STATUS}", RuntimeWarning, stacklevel=2)

_PACKS: "weakref.WeakKeyDictionary" = weakref.WeakKeyDictionary()


def _pack(eos):
    """Parameter block of one CubicEOS (cached per object; the EOS is immutable)."""
    par = _PACKS.get(eos)
    if par is None:
        c = eos.comps
        head = np.zeros(_HEADER)
        head[:5] = (R, eos.d1, eos.d2, ROOT_DISTINCT_REL, eos.root_polish_steps)
        par = np.ascontiguousarray(np.concatenate([
            head, eos.sqrt_ac, eos.ms, eos.sqrt_Tc, eos.bs, c.Tcs, c.Pcs, c.omegas,
            np.asarray(eos.omk, dtype=float).ravel(), eos.cs, eos.twu[:, 0], eos.twu[:, 1],
            eos.twu[:, 2], cold_trial_flags(c)]), dtype=np.float64)
        _PACKS[eos] = par
    return par


_PACK_PTRS: "weakref.WeakKeyDictionary" = weakref.WeakKeyDictionary()


def _pack_ptrs(eos):
    """References to the parameter block and the ideal-gas block of one CubicEOS (cached with
    them: the blocks are cached per object and never change, and each reference keeps its block
    alive)."""
    ptrs = _PACK_PTRS.get(eos)
    if ptrs is None:
        ptrs = (_ptr(_pack(eos)), _ptr(_ideal_gas_pack(eos.comps)))
        _PACK_PTRS[eos] = ptrs
    return ptrs


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
    elif np.ndim(code) == 0:
        code = np.full(n, int(code), dtype=np.int32)
    else:
        code = np.asarray(code)
        code = np.ascontiguousarray(code if code.shape == (n,) else np.broadcast_to(code, (n,)),
                                    dtype=np.int32)
    return code, _ptr(code)


def _cases(T, P, xs):
    """T, P (n,) and xs (n, nc) as contiguous float arrays (T and P broadcast to n)."""
    xs = _f(xs)
    n = xs.shape[0]
    T, P = _f(T), _f(P)
    if T.shape != (n,):
        T = _f(np.broadcast_to(T, (n,)))
    if P.shape != (n,):
        P = _f(np.broadcast_to(P, (n,)))
    return T, P, xs


def lnphi(eos, T, P, xs, code=None):
    """ln phi (n, nc) and Z (n,) as :meth:`CubicEOS.lnphi`; ``code`` as its ``phase`` ('vapour',
    'liquid', 'stable' or an int array: +1 largest root, -1 smallest, 0 lowest Gibbs energy), None
    for the lowest Gibbs energy everywhere."""
    T, P, xs = _cases(T, P, xs)
    n, nc = xs.shape
    out = np.empty((n, nc))
    Z = np.empty(n)
    code, cp = _codes(code, n)
    _check(_LIB.lf_lnphi(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                         _ptr(xs), cp, _ptr(out), _ptr(Z)))
    return out, Z


def stability_trials(eos, T, P, zs, lnphis_z, K, *, ln_tol, trivial_dist, max_iter, early_tm,
                     cold_T, tm_unstable, early_exit, n_trials):
    """Trial iterations of the stability test (see :func:`letdown.fluid.flash.twophase.stability`).

    Returns
    -------
    tm : (n,) most negative modified tangent-plane distance [-]
    ws : (n, nc) that trial's composition [-]
    Z : (n,) that trial's compressibility factor [-]
    tm_trials, ws_trials, Z_trials : (NT, n), (NT, n, nc), (NT, n), every trial's (a trial not
    run: tm 0, the feed's composition, Z 0); NT = n_trials, the kernels' room (checked)
    """
    T, P, zs, lnphis_z, K = _f(T), _f(P), _f(zs), _f(lnphis_z), _f(K)
    n, nc = zs.shape
    cfg = np.array([ln_tol, trivial_dist, max_iter, early_tm, cold_T, tm_unstable],
                   dtype=np.float64)
    tm = np.empty(n)
    ws = np.empty((n, nc))
    Z = np.empty(n)
    tma = np.empty((n, n_trials))
    wa = np.empty((n, n_trials, nc))
    Za = np.empty((n, n_trials))
    _check(_LIB.lf_stability(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                             _ptr(zs), _ptr(lnphis_z), _ptr(K), _ptr(cfg),
                             1 if early_exit else 0, _ptr(tm), _ptr(ws),
                             _ptr(Z), n_trials, _ptr(tma), _ptr(wa), _ptr(Za)))
    return tm, ws, Z, tma.T.copy(), wa.transpose(1, 0, 2).copy(), Za.T.copy()


def _tp_cfg(tol, max_iter, accelerate_every, gdem_max_lambda, gdem_max_step, gdem_agree,
            trivial_lnK, rr_tol, rr_max_iter, neg_bounds):
    # order as the TP_* enumeration in the C file
    return np.array([tol, max_iter, accelerate_every, gdem_max_lambda, gdem_max_step, gdem_agree,
                     trivial_lnK, rr_tol, rr_max_iter, neg_bounds[0], neg_bounds[1]],
                    dtype=np.float64)


def two_phase_ss(eos, T, P, zs, Ks, **cfg):
    """Successive substitution of the two-phase flash (see
    :func:`letdown.fluid.flash.twophase.two_phase_flash`); keyword arguments are the constants of
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
    T, P, xs = _cases(T, P, xs)
    n, nc = xs.shape
    out = np.empty((len(_PROPERTY_ROWS), n))
    code, cp = _codes(code, n)
    _check(_LIB.lf_properties(n, nc, _ptr(_pack(eos)), _ptr(T), _ptr(P),
                              _ptr(xs), cp, _ptr(out)))
    return dict(zip(_PROPERTY_ROWS, out))


# ------------------------------------------------------------------------------------------------
_BLOCKS: dict = {}


def _block(order, constants):
    """A constant block in the order of the C enumeration, from a function returning a dict
    (cached: the constants are module-level and do not change)."""
    blk = _BLOCKS.get(constants)
    if blk is None:
        values = constants()
        blk = np.array([float(values[k]) for k in order], dtype=np.float64)
        _BLOCKS[constants] = blk
    return blk


_IG_PACKS: "weakref.WeakKeyDictionary" = weakref.WeakKeyDictionary()


def _ideal_gas_pack(comps):
    """Ideal-gas block of a ComponentSet: P_REF, the Aly-Lee and polynomial coefficients, H and S
    at the reference temperature, molar masses (see ``ig_view`` in the C file)."""
    blk = _IG_PACKS.get(comps)
    if blk is None:
        from ..components import P_REF
        head = np.zeros(_HEADER)
        head[0] = P_REF
        poly = np.asarray(comps._poly, dtype=float)
        blk = np.ascontiguousarray(np.concatenate([
            head, comps._C1, comps._C2, comps._C3, comps._C4, comps._C5,
            poly[:, 0], poly[:, 1], poly[:, 2], poly[:, 3], poly[:, 4],
            comps._H0, comps._S0, comps.Ms]), dtype=np.float64)
        _IG_PACKS[comps] = blk
    return blk


def flash_pt(eos, T, P, zs, K_init, assume, tol, constants):
    """The P-T flash of :func:`letdown.fluid.flash.twophase.flash_TP` for every mixture of a batch
    (pure components come back as one phase with vapour fraction NaN, for the caller to name).

    Parameters
    ----------
    K_init : (n, nc) or None
    assume : (n,) int or None
    tol : float or (n,) [-]
    constants : callable returning the dict of flash constants (``flash.native_flash_constants``)

    Returns
    -------
    beta (n,), xs (n, nc), ys (n, nc), n_phases (n,) int, converged (n,) bool, iterations (n,) int,
    residual (n,)
    """
    T, P, zs = _cases(T, P, zs)
    n, nc = zs.shape
    fc = _block(_FP_ORDER, constants)
    if np.ndim(tol) == 0:
        tol = np.full(n, float(tol))
    else:
        tol = np.ascontiguousarray(np.broadcast_to(np.asarray(tol, dtype=np.float64), (n,)))
    K = None if K_init is None else _f(K_init)
    a = None if assume is None else np.ascontiguousarray(assume, dtype=np.int32)
    beta = np.empty(n)
    xs = np.empty((n, nc))
    ys = np.empty((n, nc))
    nph = np.empty(n, dtype=np.int32)
    conv = np.empty(n, dtype=np.int32)
    iters = np.empty(n, dtype=np.int32)
    resid = np.empty(n)
    par = _ptr(_pack(eos))
    fcp = _ptr(fc)

    def run(lo, hi):
        return _LIB.lf_flash_pt(hi - lo, nc, par, fcp, _ptr(T[lo:hi]), _ptr(P[lo:hi]),
                                _ptr(zs[lo:hi]), None if K is None else _ptr(K[lo:hi]),
                                None if a is None else _ptr(a[lo:hi]), _ptr(tol[lo:hi]),
                                _ptr(beta[lo:hi]), _ptr(xs[lo:hi]), _ptr(ys[lo:hi]),
                                _ptr(nph[lo:hi]), _ptr(conv[lo:hi]), _ptr(iters[lo:hi]),
                                _ptr(resid[lo:hi]))

    _run_chunked(n, run)
    return beta, xs, ys, nph.astype(int), conv.astype(bool), iters.astype(int), resid


def hs_of_split(eos, T, P, zs, n_phases, beta, xs, ys):
    """Enthalpy [J/mol], entropy [J/(mol K)] and single-phase cp [J/(mol K)] (NaN for two phases)
    of P-T splits, as ``CubicEngine._hs_of_split``."""
    T, P, zs = _cases(T, P, zs)
    n, nc = zs.shape
    nph = np.ascontiguousarray(n_phases, dtype=np.int32)
    beta, xs, ys = _f(beta), _f(xs), _f(ys)
    h = np.empty(n)
    s = np.empty(n)
    cp = np.empty(n)
    _check(_LIB.lf_hs_of_split(n, nc, _ptr(_pack(eos)), _ptr(_ideal_gas_pack(eos.comps)), _ptr(T),
                               _ptr(P), _ptr(zs), _ptr(nph), _ptr(beta), _ptr(xs), _ptr(ys),
                               _ptr(h), _ptr(s), _ptr(cp)))
    return h, s, cp


_PHASE_ROWS = ("h", "s", "cp", "cv", "jt", "w", "v", "Z", "density", "molar_mass")


def phase(eos, T, P, xs, code, volume_shift):
    """All properties of phases, as ``CubicEngine._phase`` (same keys and units); ``code`` as in
    :func:`lnphi`; ``volume_shift`` reports volumes with the Peneloux translation."""
    T, P, xs = _cases(T, P, xs)
    n, nc = xs.shape
    out = np.empty((len(_PHASE_ROWS), n))
    code, cp = _codes(code, n)
    _check(_LIB.lf_phase(n, nc, _ptr(_pack(eos)), _ptr(_ideal_gas_pack(eos.comps)), _ptr(T),
                         _ptr(P), _ptr(xs), cp, 1 if volume_shift else 0, _ptr(out)))
    return dict(zip(_PHASE_ROWS, out))


def solve_T(eos, P, target, zs, is_s, T_guess, flash_constants, solve_constants):
    """The P-h (``is_s`` False) or P-s temperature iteration of ``CubicEngine._solve_T_mixture``
    for a batch of mixtures.

    Returns
    -------
    T (n,) [K], converged (n,) bool, beta (n,), xs (n, nc), ys (n, nc), n_phases (n,) int
    """
    zs = _f(zs)
    n, nc = zs.shape
    P, target = _f(P), _f(target)
    fc = _block(_FP_ORDER, flash_constants)
    sv = _block(_SV_ORDER, solve_constants)
    Tg = None if T_guess is None else _f(T_guess)
    T = np.empty(n)
    ok = np.empty(n, dtype=np.int32)
    beta = np.empty(n)
    xs = np.empty((n, nc))
    ys = np.empty((n, nc))
    nph = np.empty(n, dtype=np.int32)
    par, igp = _pack_ptrs(eos)
    fcp, svp = _ptr(fc), _ptr(sv)
    if n < THREAD_MIN_CASES:
        # one call on the whole batch (a scalar flash): no slices, no chunking
        _check(_LIB.lf_solve_T(n, nc, par, igp, fcp, svp, _ptr(P), _ptr(target), _ptr(zs),
                               1 if is_s else 0, None if Tg is None else _ptr(Tg), _ptr(T),
                               _ptr(ok), _ptr(beta), _ptr(xs), _ptr(ys), _ptr(nph)))
        return T, ok.astype(bool), beta, xs, ys, nph.astype(int)

    def run(lo, hi):
        return _LIB.lf_solve_T(hi - lo, nc, par, igp, fcp, svp, _ptr(P[lo:hi]),
                               _ptr(target[lo:hi]), _ptr(zs[lo:hi]), 1 if is_s else 0,
                               None if Tg is None else _ptr(Tg[lo:hi]), _ptr(T[lo:hi]),
                               _ptr(ok[lo:hi]), _ptr(beta[lo:hi]), _ptr(xs[lo:hi]),
                               _ptr(ys[lo:hi]), _ptr(nph[lo:hi]))

    _run_chunked(n, run)
    return T, ok.astype(bool), beta, xs, ys, nph.astype(int)


# ------------------------------------------------------------------------------------------------
def _n_threads():
    env = os.environ.get("LETDOWN_FLASH_THREADS", "")
    if env.isdigit() and int(env) > 0:
        return int(env)
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:           # not on every platform
        return max(1, os.cpu_count() or 1)


_POOL = None


def _run_chunked(n, run):
    """Call ``run(lo, hi)`` (a kernel call on cases lo..hi-1, returning its status) over all n
    cases: in one call for small batches, else in chunks on a thread pool created on first use."""
    global _POOL
    if n < THREAD_MIN_CASES:
        _check(run(0, n))
        return
    workers = _n_threads()
    if workers < 2:
        _check(run(0, n))
        return
    if _POOL is None:
        from concurrent.futures import ThreadPoolExecutor
        _POOL = ThreadPoolExecutor(max_workers=workers, thread_name_prefix="letdown-flash")
    n_chunks = min(n, workers * CHUNKS_PER_THREAD)
    edges = np.linspace(0, n, n_chunks + 1).astype(int)
    for rc in _POOL.map(lambda k: run(edges[k], edges[k + 1]), range(n_chunks)):
        _check(rc)


_ASSEMBLE_ROWS = ("h", "s", "cp", "cv", "jt", "w", "Z", "density")
_PER_PHASE = ("Z", "density", "h", "s", "molar_mass")


def assemble(eos, T, P, zs, n_phases, beta, xs, ys, volume_shift, dT, dP_rel, tol, constants):
    """The numbers of ``CubicEngine._assemble``: properties of the whole (``_ASSEMBLE_ROWS``,
    two-phase cp and JT coefficient by the neighbouring flashes of ``_two_phase_derivatives``),
    and Z, density, h, s, molar mass of the vapour and of the liquid (NaN where absent).

    Returns
    -------
    whole : dict of (n,), vapour : dict of (n,), liquid : dict of (n,)
    """
    T, P, zs = _cases(T, P, zs)
    n, nc = zs.shape
    nph = np.ascontiguousarray(n_phases, dtype=np.int32)
    beta, xs, ys = _f(beta), _f(xs), _f(ys)
    fc = _block(_FP_ORDER, constants)
    out = np.empty((len(_ASSEMBLE_ROWS) + 2 * len(_PER_PHASE), n))
    par, igp = _pack_ptrs(eos)
    fcp = _ptr(fc)
    vs = 1 if volume_shift else 0
    if n >= THREAD_MIN_CASES:
        rows = np.empty((n, out.shape[0]))      # chunks write rows; transposed below

        def run(lo, hi):
            part = np.empty((out.shape[0], hi - lo))
            rc = _LIB.lf_assemble(hi - lo, nc, par, igp, fcp, _ptr(T[lo:hi]), _ptr(P[lo:hi]),
                                  _ptr(zs[lo:hi]), _ptr(nph[lo:hi]), _ptr(beta[lo:hi]),
                                  _ptr(xs[lo:hi]), _ptr(ys[lo:hi]), vs, float(dT),
                                  float(dP_rel), float(tol), _ptr(part))
            rows[lo:hi] = part.T
            return rc

        _run_chunked(n, run)
        out = np.ascontiguousarray(rows.T)
    else:
        _check(_LIB.lf_assemble(n, nc, par, igp, fcp, _ptr(T), _ptr(P), _ptr(zs), _ptr(nph),
                                _ptr(beta), _ptr(xs), _ptr(ys), vs, float(dT), float(dP_rel),
                                float(tol), _ptr(out)))
    k = len(_ASSEMBLE_ROWS)
    m = len(_PER_PHASE)
    whole = dict(zip(_ASSEMBLE_ROWS, out[:k]))
    vapour = dict(zip(_PER_PHASE, out[k:k + m]))
    liquid = dict(zip(_PER_PHASE, out[k + m:]))
    return whole, vapour, liquid
