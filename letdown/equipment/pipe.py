"""Pipe: a length of line with friction, elevation and heat exchange with its surroundings.

The pipe is marched in ``steps`` equal lengths ``dx = L / steps`` (default :data:`STEPS`), all
cases at once. Over each step, with the mass flux ``G = m / A`` constant (``A = pi D^2 / 4``):

* **momentum** (steady one-dimensional flow, trapezoid rule over the step)::

      P2 = P1 - G^2 dx / (4 D) (f1 / rho1 + f2 / rho2) - g dz (rho1 + rho2) / 2
              - G^2 (1 / rho2 - 1 / rho1)

  (friction, elevation, acceleration), Darcy friction factor ``f`` by Colebrook-White
  (:func:`friction_factor`) at ``Re = G D / mu``; the viscosity by Chung et al. (1988)
  (:mod:`letdown.fluid.transport`; a wet gas as one homogeneous fluid, McAdams' mixture viscosity);
* **energy** (per mole, ``F`` the molar flow, ``M`` the molar mass)::

      h2 = h1 + Q / F - M (g dz + (v2^2 - v1^2) / 2)

  with the heat gained over the step ``Q = F cp1 (T_s - T1) (1 - exp(-U_L dx / (F cp1)))``: the
  exact solution of ``F cp dT/dx = U_L (T_s - T)`` for constant ``cp`` over the step, ``U_L`` the
  conductance per unit length [W/(m K)] and ``T_s`` the surroundings' temperature. The outlet of
  the step is a P-h flash, so the Joule-Thomson cooling of the expanding gas comes from the
  equation of state. One predictor (step-inlet properties) and one corrector pass per step; the
  corrector adds to ``Q`` the heat drawn by the temperature change the predictor saw from other
  causes ``c`` (expansion, lift), as the exact solution of ``F cp dT/dx = U_L (T_s - T) + F cp
  c / dx``: ``Q -= F cp c (1 - (1 - exp(-N)) / N)``, ``N = U_L dx / (F cp)``. The march is second
  order: halving the step divides the error by four (measured, tests/equipment/test_equipment_pipe.py).

Surroundings (``params["surroundings"]``, a dict with ``kind``):

* ``buried``: ``depth`` z of the pipe's centre line [m], ``soil_conductivity`` k [W/(m K)],
  ``ground_T`` [K]; ``U_L = 2 pi k / acosh(2 z / D)``, the conduction shape factor of a horizontal
  cylinder in a semi-infinite medium whose surface is at ``ground_T`` (Incropera & DeWitt,
  *Fundamentals of Heat and Mass Transfer*, Table 4.1 case 1; from memory). The pipe wall, its
  coating and the gas film are taken as no resistance beside the soil's, and ``D`` is the inner
  diameter (common practice for a first estimate; it over-states the exchange a little);
* ``air`` or ``U``: an overall coefficient ``U`` [W/(m2 K)] on the inner surface and the
  surroundings' temperature ``T`` [K]; ``U_L = U pi D``;
* absent: no heat exchange (adiabatic).

Energy bookkeeping: ``duty`` is the heat gained from the surroundings [W]; ``energy_in`` is that
heat less the work done lifting and accelerating the gas, ``F M (g dz + (v_out^2 - v_in^2) / 2)``,
so that the enthalpy balance closes.

Default roughness 0.045 mm: commercial steel (Moody, Trans. ASME 66 (1944) 671, his chart's
"commercial steel or wrought iron"; the usual handbook value; citation and value from memory,
common practice). Colebrook, J. Inst. Civ. Eng. 11 (1939) 133; Haaland, J. Fluids Eng. 105 (1983)
89 (citations from memory).
"""
from __future__ import annotations

import numpy as np

from ..constants import G_STANDARD
from ..errors import InputError
from ..fluid.transport import homogeneous_viscosity, phase_transport
from .common import (TINY_FLOW, TWO_PHASE_BOUNDS, Refusals, array_param, case_text, field_name,
                     finish)
from .stream import StreamBatch

#: Default absolute roughness [m]: commercial steel, 0.045 mm (see the module docstring).
ROUGHNESS_DEFAULT = 4.5e-5
#: Default number of steps along the pipe [-]: with the trapezoid rule, a 50 km line losing a third
#: of its pressure is integrated to about 0.01 % in pressure drop (tests/equipment/test_equipment_pipe.py).
STEPS = 20
#: At most this many steps [-] (each costs two batch flashes).
MAX_STEPS = 2000
#: Below this Reynolds number the flow is laminar, ``f = 64 / Re`` [-]; above it Colebrook-White
#: (its transition zone included). The lower critical Reynolds number of pipe flow, about 2000-2300
#: (common practice).
RE_LAMINAR = 2000.0
#: Colebrook-White iteration: Newton steps on ``1/sqrt(f)`` until the change is below this [-];
#: the equation is smooth and Newton from the Haaland (1983) start converges in 2-4 steps.
COLEBROOK_TOL = 1e-13
COLEBROOK_MAX_ITER = 50
#: A pipe whose pressure falls below this fraction of its inlet pressure cannot pass the flow as
#: given [-] (far past any design; the gas would choke before).
MIN_PRESSURE_FRACTION = 0.01
#: Below this NTU of a step, ``1 - (1 - exp(-N)) / N`` is taken as its limit ``N / 2`` [-] (the
#: quotient loses digits to cancellation there).
NTU_SMALL = 1e-6

#: An elevation change larger than this [m] is refused: about the height of the highest
#: mountains; no gas line climbs or falls more, and 100 km of falling gas column would compress it
#: past every model's range (our choice).
MAX_ELEVATION = 1e4

SURROUNDINGS = ("buried", "air", "U")


def friction_factor(Re, relative_roughness):
    """Darcy friction factor of a round pipe, laminar or by Colebrook-White.

    ``f = 64 / Re`` below :data:`RE_LAMINAR`; above it the Colebrook (1939) equation::

        1 / sqrt(f) = -2 log10(eps / (3.7 D) + 2.51 / (Re sqrt(f)))

    solved by Newton's method on ``1/sqrt(f)`` from the explicit Haaland (1983) estimate.

    Parameters
    ----------
    Re : array_like (n,)
        Reynolds number [-] (0 gives f = 0: no flow, no friction).
    relative_roughness : array_like (n,)
        eps / D [-].

    Returns
    -------
    ndarray (n,)
        Darcy friction factor [-].

    Examples
    --------
    >>> round(float(friction_factor(1e6, 1e-4)[0]), 6)
    0.013441
    """
    Re = np.atleast_1d(np.asarray(Re, dtype=float))
    eD = np.broadcast_to(np.asarray(relative_roughness, dtype=float), Re.shape)
    turb = Re >= RE_LAMINAR
    Ret = np.where(turb, Re, 1e5)
    a = eD / 3.7
    b = 2.51 / Ret
    # Haaland (1983): 1/sqrt(f) = -1.8 log10((eD/3.7)^1.11 + 6.9/Re)
    x = -1.8 * np.log10(a ** 1.11 + 6.9 / Ret)
    ln10 = np.log(10.0)
    for _ in range(COLEBROOK_MAX_ITER):
        g = x + 2.0 * np.log10(a + b * x)
        dg = 1.0 + 2.0 * b / ((a + b * x) * ln10)
        step = g / dg
        x = x - step
        if np.all(np.abs(step) < COLEBROOK_TOL * np.abs(x)):
            break
    f_turb = 1.0 / x ** 2
    return np.where(turb, f_turb, np.where(Re > 0.0, 64.0 / np.where(Re > 0.0, Re, 1.0), 0.0))


def conductance_per_length(surroundings: dict, D, n: int, name: str):
    """Heat conductance per unit length ``U_L`` [W/(m K)] and surroundings' temperature [K].

    Raises
    ------
    InputError
        For an unknown kind, a missing entry, or a buried pipe whose centre lies less than half
        a diameter below ground (``depth < D/2``).
    """
    if not surroundings:
        return np.zeros(n), np.full(n, np.nan)
    kind = surroundings.get("kind")
    if kind not in SURROUNDINGS:
        raise InputError(f"unknown surroundings '{kind}' (use one of {', '.join(SURROUNDINGS)})",
                         field=field_name(name, "surroundings"))

    def get(key):
        v = surroundings.get(key)
        if v is None:
            raise InputError(f"{kind} surroundings need '{key}'",
                             field=field_name(name, f"surroundings.{kind}.{key}"))
        return np.broadcast_to(np.asarray(v, dtype=float), (n,)).copy()

    if kind == "buried":
        z, k, T = get("depth"), get("soil_conductivity"), get("ground_T")
        bad = ~(z > D / 2.0)
        if np.any(bad):
            i = int(np.flatnonzero(bad)[0])
            raise InputError(f"depth {z[i]:.6g} m (to the pipe's centre line) is less than half "
                             f"the diameter {D[i]:.6g} m: the pipe would stick out of the ground"
                             + case_text(i, n), field=field_name(name, "surroundings.buried.depth"))
        if np.any(~(k > 0.0)):
            raise InputError("soil_conductivity must be positive",
                             field=field_name(name, "surroundings.buried.soil_conductivity"))
        return 2.0 * np.pi * k / np.arccosh(2.0 * z / D), T
    U, T = get("U"), get("T")
    if np.any(~(U >= 0.0)):
        raise InputError("U must not be negative", field=field_name(name, f"surroundings.{kind}.U"))
    return U * np.pi * D, T


def _props(fluid, states):
    """Mass density [kg/m3], viscosity [Pa s], molar cp [J/(mol K)], vapour mass fraction [-],
    speed of sound [m/s] of a batch of states (a wet gas as one homogeneous fluid)."""
    per = phase_transport(states)
    beta = np.asarray(states.vapour_fraction, dtype=float)
    Mv = np.asarray(states.vapour["molar_mass"], dtype=float)
    M = np.asarray(states.molar_mass, dtype=float)
    x_mass = np.clip(np.where(beta > 0.0, beta * np.nan_to_num(Mv) / M, 0.0), 0.0, 1.0)
    mu = homogeneous_viscosity(per["vapour"][0], per["liquid"][0], x_mass)
    return np.asarray(states.density, dtype=float), mu, np.asarray(states.cp, dtype=float), x_mass


def _flash(fluid, zs, **spec):
    return fluid.flash(zs=zs, **spec)


def run(fluid, name: str, inlets, params):
    """A batch through a pipe.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``length`` [m], ``diameter`` (inner) [m]; optional ``roughness`` [m] (default
        :data:`ROUGHNESS_DEFAULT`), ``elevation_change`` (outlet above inlet) [m], ``steps`` [-],
        ``surroundings`` (dict, see the module docstring; SI), ``max_velocity`` [m/s] (the
        flowsheet's limit, for the ``velocity_high`` flag).

    Returns
    -------
    BlockOutcome
        ``duty`` [W] (heat gained), ``dP`` [Pa]; details ``velocity_in_m_s``,
        ``velocity_out_m_s``, ``velocity_max_m_s``, ``reynolds`` (inlet), ``friction_factor``
        (inlet), ``UA_W_K`` (``U_L L``), ``surroundings_T_K``, and the profile along the pipe
        ``profile_x_m``, ``profile_T_K``, ``profile_P_Pa`` (n, steps + 1); flags
        ``two_phase_flow`` and ``velocity_high``.

    Raises
    ------
    InputError
        If the length, diameter or roughness is not positive (roughness: negative), the elevation
        change exceeds the length, the surroundings are wrong (:func:`conductance_per_length`), or
        (cases refused) the pressure falls below :data:`MIN_PRESSURE_FRACTION` of the inlet's or
        the gas reaches its speed of sound: the pipe cannot pass the flow.
    """
    inlet: StreamBatch = inlets["in"]
    n = inlet.n_cases
    L = array_param(params, "length", n, name)
    D = array_param(params, "diameter", n, name)
    if L is None or D is None:
        raise InputError("a pipe needs its length and (inner) diameter",
                         field=field_name(name, "length" if L is None else "diameter"))
    eps = array_param(params, "roughness", n, name, default=ROUGHNESS_DEFAULT)
    dz = array_param(params, "elevation_change", n, name, default=0.0)
    for key, v, ok in (("length", L, L > 0.0), ("diameter", D, D > 0.0),
                       ("roughness", eps, (eps >= 0.0) & (eps < D / 2.0)),
                       ("elevation_change", dz, (np.abs(dz) <= L) & (np.abs(dz) <= MAX_ELEVATION))):
        if np.any(~ok):
            i = int(np.flatnonzero(~ok)[0])
            what = {"length": "must be positive", "diameter": "must be positive",
                    "roughness": "must be zero or more and below the radius",
                    "elevation_change": f"cannot exceed the length or {MAX_ELEVATION:g} m"}[key]
            raise InputError(f"{key} {v[i]:.6g} m {what}" + case_text(i, n),
                             field=field_name(name, key))
    steps = params.get("steps", STEPS)
    if not (isinstance(steps, (int, np.integer)) and 1 <= steps <= MAX_STEPS):
        raise InputError(f"steps must be a whole number from 1 to {MAX_STEPS}, got {steps!r}",
                         field=field_name(name, "steps"))
    U_L, T_s = conductance_per_length(params.get("surroundings") or {}, D, n, name)

    F = np.asarray(inlet.flow, dtype=float)
    flowing = F > 0.0
    Fs = np.maximum(F, TINY_FLOW)
    zs = np.asarray(inlet.zs, dtype=float)
    M = np.asarray(inlet.molar_mass, dtype=float)
    area = np.pi * D ** 2 / 4.0
    Gm = F * M / area                                    # mass flux [kg/(m2 s)]
    dx, dzk = L / steps, dz / steps
    hU = np.where(flowing, U_L * dx, 0.0)

    st = _flash(fluid, zs, T=np.asarray(inlet.T, dtype=float), P=np.asarray(inlet.P, dtype=float))
    h = np.asarray(inlet.h, dtype=float)
    rho, mu, cp, x_mass = _props(fluid, st)
    Re = Gm * D / mu
    f = friction_factor(Re, eps / D)
    Re_in, f_in = Re, f
    v_in = Gm / rho
    v_max = v_in.copy()
    wet = np.zeros(n, dtype=bool)
    failed = np.zeros(n, dtype=bool)
    choked = np.zeros(n, dtype=bool)
    Q_total = np.zeros(n)
    work_total = np.zeros(n)
    T_prof = [np.asarray(st.T, dtype=float)]
    P_prof = [np.asarray(st.P, dtype=float)]
    P, T = P_prof[0].copy(), T_prof[0].copy()
    P_floor = MIN_PRESSURE_FRACTION * P
    lo, hi = TWO_PHASE_BOUNDS
    for _ in range(steps):
        v1 = Gm / rho
        ntu = hU / (Fs * cp)
        heated = flowing & np.isfinite(T_s)
        approach = -np.expm1(-ntu)                       # 1 - exp(-NTU) of the step
        Q = np.where(heated, Fs * cp * (np.nan_to_num(T_s) - T) * approach, 0.0)
        # predictor: the step's inlet properties throughout
        P2 = P - Gm ** 2 * dx * f / (2.0 * D * rho) - G_STANDARD * dzk * rho
        work = np.where(flowing, Fs * M * G_STANDARD * dzk, 0.0)
        failed |= flowing & ~(P2 > P_floor)
        P2 = np.where(failed, P, P2)
        s2 = _flash(fluid, zs, P=P2, h=np.where(failed, h, h + (Q - work) / Fs), T_guess=T)
        rho2, mu2, _, _ = _props(fluid, s2)
        f2 = friction_factor(Gm * D / mu2, eps / D)
        # corrector: trapezoid over the step for the momentum; for the heat, the exact solution
        # of F cp dT/dx = U_L (T_s - T) + F cp c / dx, where c is the step's temperature change
        # by other causes (expansion, lift) seen by the predictor: Q -= F cp c (1 - (1-e^-N)/N)
        c = np.asarray(s2.T, dtype=float) - T - Q / (Fs * cp)
        lag = np.where(ntu > NTU_SMALL, 1.0 - approach / np.where(ntu > NTU_SMALL, ntu, 1.0),
                       0.5 * ntu)
        Q = np.where(heated, Q - Fs * cp * c * lag, 0.0)
        P2 = (P - Gm ** 2 * dx / (4.0 * D) * (f / rho + f2 / rho2)
              - G_STANDARD * dzk * (rho + rho2) / 2.0 - Gm ** 2 * (1.0 / rho2 - 1.0 / rho))
        v2 = Gm / rho2
        work = np.where(flowing, Fs * M * (G_STANDARD * dzk + 0.5 * (v2 ** 2 - v1 ** 2)), 0.0)
        failed |= flowing & ~(P2 > P_floor)
        P2 = np.where(failed, P, P2)
        h2 = np.where(failed, h, h + (Q - work) / Fs)
        st = _flash(fluid, zs, P=P2, h=h2, T_guess=np.where(failed, T, np.asarray(s2.T)))
        Q_total += np.where(failed, 0.0, Q)
        work_total += np.where(failed, 0.0, work)
        h = h2
        P, T = np.asarray(st.P, dtype=float), np.asarray(st.T, dtype=float)
        rho, mu, cp, x_mass = _props(fluid, st)
        f = friction_factor(Gm * D / mu, eps / D)
        v = Gm / rho
        v_max = np.fmax(v_max, v)
        beta = np.asarray(st.vapour_fraction, dtype=float)
        wet |= flowing & (beta > lo) & (beta < hi)
        w = np.asarray(st.w, dtype=float)
        choked |= flowing & np.isfinite(w) & (v >= w)
        T_prof.append(T)
        P_prof.append(P)
    refusals = Refusals(params, name)
    refusals.add(failed, lambda i: f"the pressure falls below {MIN_PRESSURE_FRACTION:g} of the "
                 f"inlet's ({inlet.P[i] / 1e5:.4g} bar) along the pipe: it cannot pass this flow; "
                 "give a larger diameter or a shorter length, or lower the flow", "diameter")
    refusals.add(choked & ~failed, lambda i: "the gas reaches its speed of sound in the pipe "
                 "(choked): it cannot pass this flow; give a larger diameter or lower the flow",
                 "diameter")
    refusals.raise_any()
    out = StreamBatch.from_states(st, F)
    x_nodes = np.linspace(0.0, 1.0, steps + 1)[None, :] * L[:, None]
    details = {
        "velocity_in_m_s": v_in, "velocity_out_m_s": Gm / rho, "velocity_max_m_s": v_max,
        "reynolds": Re_in, "friction_factor": f_in, "UA_W_K": U_L * L,
        "surroundings_T_K": T_s,
        "profile_x_m": x_nodes, "profile_T_K": np.stack(T_prof, axis=1),
        "profile_P_Pa": np.stack(P_prof, axis=1),
    }
    flags = {"two_phase_flow": wet}
    vmax_limit = params.get("max_velocity")
    if vmax_limit is not None:
        lim = np.broadcast_to(np.asarray(vmax_limit, dtype=float), (n,)).copy()
        details["max_velocity_m_s"] = lim
        flags["velocity_high"] = flowing & (v_max > lim)
    return finish(inlets, {"out": out}, Q_total - work_total, duty=Q_total, dP=inlet.P - P,
                  details=details, flags=flags)
