"""Control valves and regulators on gas: sizing, opening and aerodynamic noise (pure array functions).

Every function takes arrays over cases (shape (n,)) in SI units and returns arrays; nothing here
flashes, reads files or prints. :mod:`letdown.equipment.throttle` calls them with the inlet and
outlet states of a rated throttle.

Sizing: IEC 60534-2-1:2011, compressible fluids, turbulent flow
---------------------------------------------------------------
With the mass flow ``W`` [kg/h], the inlet pressure ``P1`` [kPa], the inlet density ``rho1``
[kg/m3] (the model's real-gas density, ``rho1 = P1 M / (Z1 R T1)``: the standard's real-gas Z
enters through it) and the pressure-drop ratio ``x = (P1 - P2) / P1``::

    C = W / (N6 Fp Y sqrt(x_s P1 rho1))            (clause 6.4, density form)
    F_gamma = gamma / 1.40                          (specific heat ratio factor)
    x_s = min(x, F_gamma xTP)                       (choked flow: x >= F_gamma xTP, clause 6.4.2)
    Y = 1 - x_s / (3 F_gamma xTP)                   (expansion factor; 2/3 when choked)

``N6 = 3.16`` for Kv [m3/h] (2.73 for Cv), Table 1 of the standard. With reducers or expanders
(the valve's ``size`` d smaller than the pipes D1, D2; clause 7)::

    Fp = 1 / sqrt(1 + sum(zeta) / N2 (C / d^2)^2)                 N2 = 1.60e-3 (Kv, d in mm)
    xTP = (xT / Fp^2) / (1 + xT zeta_i / N5 (C / d^2)^2)          N5 = 1.80e-3 (Kv, d in mm)
    zeta1 = 0.5 (1 - (d/D1)^2)^2, zeta2 = 1.0 (1 - (d/D2)^2)^2,
    zetaB = 1 - (d/D)^4,  sum(zeta) = zeta1 + zeta2 + zetaB1 - zetaB2,  zeta_i = zeta1 + zetaB1

and ``xTP = xT``, ``Fp = 1`` without fittings. Because Fp and xTP depend on C, the required C is
the fixed point of the sizing equation, found by successive substitution from the no-fittings
value (:data:`SIZING_RTOL`); the standard's own procedure iterates the same equation.

**Reynolds number factor**: ``FR = 1`` is assumed (fully turbulent flow). That holds for gas
service through regulators and control valves of a let-down station (valve Reynolds numbers of
1e5 and more); it does not hold for small-flow trims (needle valves at a few Sm3/h), which this
module does not rate. No viscosity is needed.

**Which specific heat ratio**: the standard writes ``gamma`` for the ratio of specific heats,
derived for an ideal gas, where it equals the isentropic exponent. For a real gas the two differ
(methane at 70 bar and 15 degC, CoolProp's reference equation: cp/cv 1.58, isentropic exponent
1.40, ideal-gas cp/cv 1.31). The expansion to
the vena contracta, and with it the choked pressure ratio and Y, follows the isentrope, so this
module takes the real-gas **isentropic exponent** ``kappa = rho w^2 / P`` at the inlet (``w`` the
model's speed of sound), as ISO 5167-1:2003 (clause 3.3.6, the isentropic exponent in the
expansibility factor of flow meters) does; for an ideal gas it equals cp/cv. The throttle's
details state it (``isentropic_exponent``).

Opening: IEC 60534-2-4 inherent characteristics
-----------------------------------------------
The relative flow coefficient ``phi = C_required / C_rated`` against relative travel ``h``:
linear ``phi = h``; equal-percentage ``phi = R^(h - 1)`` with the rangeability ``R``
(``h = 1 + ln(phi) / ln(R)``). Below ``phi = 1/R`` the valve is below its controllable range
(flagged by the throttle; the opening is shown as 0).

Noise: IEC 60534-8-3:2010
-------------------------
The aerodynamic sound pressure level, A-weighted, 1 m from the outlet pipe wall and 1 m
downstream of the valve: the flow regime (I to V) from the vena-contracta pressure ratios, the
acoustic efficiency, the internal sound power and level, the peak frequency, the pipe wall's
transmission loss per third-octave band (ring and coincidence frequencies of a steel pipe), the
level outside summed over the bands with the A-weighting of IEC 61672-1:2013 (Table 3), and the
extra source at the expander where the outlet Mach number exceeds 0.3. The gas state downstream
is the standard's: ``rho2 = rho1 P2 / P1`` and ``c2 = sqrt(gamma R T2 / M)`` with ``T2`` the
model's outlet temperature. The equations were written from the standard's clause structure
(recalled) and cross-checked against the independent implementation in the ``fluids`` package
(tests/equipment/test_valve.py, within 0.01 dB on every regime).

Constants not given by the user (their sources):

* steel pipe wall: density 7800 kg/m3 and speed of sound 5000 m/s; air 1.293 kg/m3 and 343 m/s at
  101.325 kPa; the values used in the worked examples of IEC 60534-8-3:2010 (from memory);
* ``An = -3.8``, the valve correction factor of acoustic efficiency used in the same examples
  (from memory; it depends on the valve style: give ``An`` for another);
* Strouhal number at the peak ``0.2`` and the expander contraction ``0.93`` (same source, from
  memory).
"""
from __future__ import annotations

import numpy as np

from ..constants import R, STANDARD_ATMOSPHERE

#: Flow coefficient conversion Cv = CV_PER_KV Kv [-]: a valve passing Cv US gal/min of water at
#: 1 psi passes Cv * 0.2271247 * sqrt(1 bar / 1 psi) m3/h at 1 bar (US gallon 3.785411784 L, psi
#: per NIST SP 811), so Kv = 0.86497 Cv (IEC 60534-1 rounds it to 0.865).
CV_PER_KV = 1.0 / (0.003785411784 * 60.0 * np.sqrt(1e5 / 6894.757293168361))

#: IEC 60534-2-1:2011 Table 1 numerical constants for Kv [m3/h], W [kg/h], P [kPa], rho [kg/m3],
#: d [mm].
N6_KV = 3.16
N2_KV = 1.60e-3
N5_KV = 1.80e-3
#: IEC 60534-8-3:2010 jet diameter constant for Cv (4.9e-3 for Kv) [-].
N14_CV = 4.6e-3
#: Reference ratio of specific heats of the standard's F_gamma = gamma / 1.40 [-].
GAMMA_AIR = 1.40
#: Relative change of the required C between substitutions below which the fittings iteration has
#: converged [-] (round-off level on C; the iteration contracts fast where a solution exists).
SIZING_RTOL = 1e-10
#: Successive substitutions before a case is declared without a solution (the fittings limit the
#: flow below the demand for any C); each costs a few array operations.
SIZING_MAX_ITER = 200

#: Pipe wall and air constants (module docstring for their source).
STEEL_DENSITY = 7800.0
STEEL_SOUND_SPEED = 5000.0
AIR_DENSITY = 1.293
AIR_SOUND_SPEED = 343.0
AIR_PRESSURE = STANDARD_ATMOSPHERE
#: Valve correction factor of acoustic efficiency, Strouhal number at the peak frequency and the
#: expander contraction coefficient (module docstring).
AN_DEFAULT = -3.8
STROUHAL_PEAK = 0.2
EXPANDER_CONTRACTION = 0.93
#: Outlet Mach number above which IEC 60534-8-3 adds the expander's own noise and caps the
#: internal level's Mach correction [-].
MACH_EXPANDER = 0.3
#: Third-octave band centre frequencies [Hz] and A-weightings [dB] (IEC 61672-1:2013 Table 3).
BAND_HZ = np.array([12.5, 16, 20, 25, 31.5, 40, 50, 63, 80, 100, 125, 160, 200, 250, 315, 400,
                    500, 630, 800, 1000, 1250, 1600, 2000, 2500, 3150, 4000, 5000, 6300, 8000,
                    10000, 12500, 16000, 20000], dtype=float)
A_WEIGHT_DB = np.array([-63.4, -56.7, -50.5, -44.7, -39.4, -34.6, -30.2, -26.2, -22.5, -19.1,
                        -16.1, -13.4, -10.9, -8.6, -6.6, -4.8, -3.2, -1.9, -0.8, 0.0, 0.6, 1.0,
                        1.2, 1.3, 1.2, 1.0, 0.5, -0.1, -1.1, -2.5, -4.3, -6.6, -9.3])

CHARACTERISTICS = ("linear", "equal-percentage")


def _arr(x, n=None):
    a = np.asarray(x, dtype=float)
    return a if n is None else np.broadcast_to(a, (n,)).astype(float)


def loss_coefficients(d, D1=None, D2=None):
    """Velocity-head loss coefficients of concentric reducer and expander (IEC 60534-2-1 cl. 7).

    Parameters
    ----------
    d : array_like
        Valve size (nominal bore) [m].
    D1, D2 : array_like or None
        Inner diameters of the inlet and outlet pipes [m]; None for no fitting on that side.

    Returns
    -------
    total, inlet : ndarray
        ``sum(zeta) = zeta1 + zeta2 + zetaB1 - zetaB2`` and ``zeta_i = zeta1 + zetaB1`` [-].

    Examples
    --------
    >>> [round(float(z), 4) for z in loss_coefficients(0.05, 0.08, 0.1)]
    [0.6581, 1.0331]
    """
    d = _arr(d)
    total = np.zeros_like(d)
    inlet = np.zeros_like(d)
    if D1 is not None:
        r2 = (d / _arr(D1)) ** 2
        inlet = 0.5 * (1.0 - r2) ** 2 + (1.0 - r2 * r2)
        total = total + inlet
    if D2 is not None:
        r2 = (d / _arr(D2)) ** 2
        total = total + 1.0 * (1.0 - r2) ** 2 - (1.0 - r2 * r2)
    return total, inlet


def _fittings(Kv, d_mm, zeta, zeta_i, xT):
    """Fp and xTP at flow coefficient Kv [m3/h], valve bore d_mm [mm] (arrays)."""
    k2 = (Kv / d_mm ** 2) ** 2
    Fp = 1.0 / np.sqrt(1.0 + zeta / N2_KV * k2)
    xTP = (xT / Fp ** 2) / (1.0 + xT * zeta_i / N5_KV * k2)
    return Fp, xTP


def _flow_terms(x, kappa, xTP):
    """F_gamma, the choked ratio, the ratio used and Y."""
    Fg = kappa / GAMMA_AIR
    x_choked = Fg * xTP
    x_s = np.minimum(x, x_choked)
    Y = 1.0 - x_s / (3.0 * x_choked)
    return x_choked, x_s, Y


def size(mass_flow, P1, P2, rho1, kappa, xT, d=None, D1=None, D2=None):
    """Required flow coefficient of a valve on gas (IEC 60534-2-1:2011, FR = 1).

    Parameters
    ----------
    mass_flow : array_like (n,)
        Mass flow [kg/s].
    P1, P2 : array_like (n,)
        Inlet and outlet pressures [Pa], ``P2 <= P1``.
    rho1 : array_like (n,)
        Inlet density [kg/m3] (real gas).
    kappa : array_like (n,)
        Ratio of specific heats used by the standard [-] (the module docstring says which).
    xT : array_like (n,)
        Pressure differential ratio factor at choked flow, without fittings [-].
    d, D1, D2 : array_like or None
        Valve size and the inner diameters of the inlet and outlet pipes [m] (all None: no
        fittings; ``d`` with either pipe: reducers where the pipe is larger).

    Returns
    -------
    dict of ndarray (n,)
        ``Kv`` [m3/h], ``Cv`` [US gal/min at 1 psi], ``x``, ``x_choked`` (``F_gamma xTP``), ``Y``,
        ``Fp``, ``xTP`` [-], ``choked`` (bool), ``converged`` (bool; False where the fittings
        hold the flow below the demand for any C: ``Kv`` is then NaN).

    Examples
    --------
    >>> out = size(1.0, 5e6, 1.5e6, 40.0, 1.3, 0.7)   # choked: x = 0.7 > 1.3/1.4 * 0.7
    >>> bool(out["choked"][0]), round(float(out["Y"][0]), 4)
    (True, 0.6667)
    """
    m, P1, P2, rho1, kappa, xT = np.broadcast_arrays(*(np.atleast_1d(_arr(v)) for v in
                                                       (mass_flow, P1, P2, rho1, kappa, xT)))
    n = m.shape[0]
    W = m * 3600.0
    x = (P1 - P2) / P1
    root = np.sqrt(np.maximum(x, 0.0) * P1 * 1e-3 * rho1)
    pipes = d is not None and (D1 is not None or D2 is not None)
    if pipes:
        d_mm = _arr(d, n) * 1e3
        zeta, zeta_i = loss_coefficients(d_mm, None if D1 is None else _arr(D1, n) * 1e3,
                                         None if D2 is None else _arr(D2, n) * 1e3)
    # a case with no solution diverges (C grows without bound): its numbers overflow to inf/NaN
    # and it stays marked not converged
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        x_choked, x_s, Y = _flow_terms(x, kappa, xT)
        Kv = W / (N6_KV * Y * np.sqrt(x_s * P1 * 1e-3 * rho1))
        Fp, xTP = np.ones(n), xT.copy()
        converged = np.ones(n, dtype=bool)
        if pipes:
            converged[:] = False
            for _ in range(SIZING_MAX_ITER):
                Fp, xTP = _fittings(Kv, d_mm, zeta, zeta_i, xT)
                x_choked, x_s, Y = _flow_terms(x, kappa, xTP)
                new = W / (N6_KV * Fp * Y * np.sqrt(x_s * P1 * 1e-3 * rho1))
                done = np.abs(new - Kv) <= SIZING_RTOL * np.abs(new)
                Kv = np.where(converged, Kv, new)
                converged |= done
                if converged.all():
                    break
            Fp, xTP = _fittings(Kv, d_mm, zeta, zeta_i, xT)
            x_choked, x_s, Y = _flow_terms(x, kappa, xTP)
    # no pressure drop and some flow: no finite C passes it (inf, and the caller flags it)
    Kv = np.where(m == 0.0, 0.0, np.where(root > 0, np.where(converged, Kv, np.nan),
                                          np.where(np.isnan(rho1 * kappa), np.nan, np.inf)))
    return {"Kv": Kv, "Cv": Kv * CV_PER_KV, "x": x, "x_choked": x_choked, "Y": Y, "Fp": Fp,
            "xTP": xTP, "choked": x >= x_choked, "converged": converged}


def mass_flow(Kv, P1, P2, rho1, kappa, xT, d=None, D1=None, D2=None):
    """Mass flow through a valve of flow coefficient ``Kv`` (the forward IEC 60534-2-1 equation).

    Parameters
    ----------
    Kv : array_like (n,)
        Flow coefficient at the opening considered [m3/h].
    P1, P2, rho1, kappa, xT, d, D1, D2
        As :func:`size`.

    Returns
    -------
    ndarray (n,)
        Mass flow [kg/s]; past the choked ratio it no longer grows as P2 falls.

    Examples
    --------
    >>> out = size(2.0, 6e6, 4e6, 50.0, 1.35, 0.7)
    >>> round(float(mass_flow(out["Kv"], 6e6, 4e6, 50.0, 1.35, 0.7)[0]), 12)
    2.0
    """
    Kv, P1, P2, rho1, kappa, xT = np.broadcast_arrays(*(np.atleast_1d(_arr(v)) for v in
                                                        (Kv, P1, P2, rho1, kappa, xT)))
    n = Kv.shape[0]
    x = (P1 - P2) / P1
    Fp, xTP = np.ones(n), xT
    if d is not None and (D1 is not None or D2 is not None):
        d_mm = _arr(d, n) * 1e3
        zeta, zeta_i = loss_coefficients(d_mm, None if D1 is None else _arr(D1, n) * 1e3,
                                         None if D2 is None else _arr(D2, n) * 1e3)
        Fp, xTP = _fittings(Kv, d_mm, zeta, zeta_i, xT)
    _, x_s, Y = _flow_terms(x, kappa, xTP)
    return N6_KV * Fp * Kv * Y * np.sqrt(np.maximum(x_s, 0.0) * P1 * 1e-3 * rho1) / 3600.0


def choked_ratio(Kv, kappa, xT, d=None, D1=None, D2=None):
    """The pressure-drop ratio at which a valve of flow coefficient ``Kv`` [m3/h] chokes,
    ``F_gamma xTP`` [-] (``xTP = xT`` without fittings; arguments as :func:`size`).

    Examples
    --------
    >>> round(float(choked_ratio(100.0, 1.4, 0.7)[0]), 12)
    0.7
    """
    Kv, kappa, xT = np.broadcast_arrays(*(np.atleast_1d(_arr(v)) for v in (Kv, kappa, xT)))
    xTP = xT
    if d is not None and (D1 is not None or D2 is not None):
        n = Kv.shape[0]
        d_mm = _arr(d, n) * 1e3
        zeta, zeta_i = loss_coefficients(d_mm, None if D1 is None else _arr(D1, n) * 1e3,
                                         None if D2 is None else _arr(D2, n) * 1e3)
        _, xTP = _fittings(Kv, d_mm, zeta, zeta_i, xT)
    return kappa / GAMMA_AIR * xTP


def opening(phi, characteristic: str, rangeability):
    """Relative travel for a relative flow coefficient (IEC 60534-2-4 inherent characteristic).

    Parameters
    ----------
    phi : array_like (n,)
        ``C_required / C_rated`` [-].
    characteristic : {"linear", "equal-percentage"}
    rangeability : array_like
        ``R`` [-] (equal-percentage only; > 1).

    Returns
    -------
    ndarray (n,)
        Relative travel ``h`` [-]; above 1 where the rated C is too small. Equal-percentage
        travel below 0 (``phi < 1/R``) is returned as 0.

    Examples
    --------
    >>> float(opening(0.5, "linear", 50)[0])
    0.5
    >>> round(float(opening(1 / 50 ** 0.5, "equal-percentage", 50)[0]), 12)
    0.5
    """
    phi = np.atleast_1d(_arr(phi))
    if characteristic == "linear":
        return phi.copy()
    if characteristic == "equal-percentage":
        with np.errstate(divide="ignore"):
            h = 1.0 + np.log(phi) / np.log(_arr(rangeability))
        return np.maximum(h, 0.0)
    raise ValueError(f"unknown characteristic {characteristic!r}")


def relative_flow(h, characteristic: str, rangeability):
    """Relative flow coefficient at relative travel ``h`` [-] (inverse of :func:`opening`).

    Examples
    --------
    >>> round(float(relative_flow(0.5, "equal-percentage", 50)[0]), 6)
    0.141421
    """
    h = np.atleast_1d(_arr(h))
    if characteristic == "linear":
        return h.copy()
    if characteristic == "equal-percentage":
        return _arr(rangeability) ** (h - 1.0)
    raise ValueError(f"unknown characteristic {characteristic!r}")


def velocity(mass_flow, density, diameter):
    """Mean velocity ``m / (rho A)``, ``A = pi D^2 / 4`` [m/s].

    Examples
    --------
    >>> round(float(velocity(10.0, 50.0, 0.2)), 4)
    6.3662
    """
    return _arr(mass_flow) / (_arr(density) * np.pi * _arr(diameter) ** 2 / 4.0)


def noise(mass_flow, P1, P2, T1, T2, rho1, gamma, molar_mass, Cv, FL, Fd, d, Di, wall,
          Fp=None, FLP=None, An=AN_DEFAULT):
    """A-weighted aerodynamic sound pressure level 1 m from the outlet pipe wall (IEC
    60534-8-3:2010).

    Parameters
    ----------
    mass_flow : array_like (n,)
        [kg/s].
    P1, P2 : array_like (n,)
        Inlet and outlet pressures [Pa].
    T1, T2 : array_like (n,)
        Inlet and outlet temperatures [K].
    rho1 : array_like (n,)
        Inlet density [kg/m3].
    gamma : array_like (n,)
        Ratio of specific heats [-] (the same as for sizing).
    molar_mass : array_like (n,)
        [kg/mol].
    Cv : array_like (n,)
        Flow coefficient at the operating opening [US gal/min at 1 psi].
    FL : array_like (n,)
        Liquid pressure recovery factor without fittings [-].
    Fd : array_like (n,)
        Valve style modifier [-].
    d : array_like (n,)
        Valve outlet size [m].
    Di : array_like (n,)
        Inner diameter of the outlet pipe [m].
    wall : array_like (n,)
        Wall thickness of the outlet pipe [m] (steel).
    Fp, FLP : array_like or None
        With fittings: the piping geometry factor and the combined recovery factor; FLP / Fp
        replaces FL.
    An : float
        Valve correction factor of acoustic efficiency [-].

    Returns
    -------
    ndarray (n,)
        ``L_pAe,1m`` [dB(A)] (NaN where the flow is zero).
    """
    m, P1, P2, T1, T2, rho1, k, M, C, FL, Fd, d, Di, ts = np.broadcast_arrays(
        *(np.atleast_1d(_arr(v)) for v in (mass_flow, P1, P2, T1, T2, rho1, gamma, molar_mass,
                                            Cv, FL, Fd, d, Di, wall)))
    # a valve no Kv of which passes the flow through its reducers has no Fp (NaN): its noise is
    # NaN too (the throttle flags it, valve_fittings_limit), without a numpy warning
    with np.errstate(divide="ignore", invalid="ignore"):
        if Fp is not None and FLP is not None:
            FL = _arr(FLP) / _arr(Fp) * np.ones_like(FL)
        x = (P1 - P2) / P1
        # regime boundaries (clause 5: critical vena-contracta ratio and the ratios of regimes
        # II-V)
        e = (k - 1.0) / k
        x_vcc = 1.0 - (2.0 / (k + 1.0)) ** (1.0 / e)
        xc = FL ** 2 * x_vcc
        alpha = (1.0 - x_vcc) / (1.0 - xc)
        xB = 1.0 - (1.0 / k) ** (1.0 / e) / alpha
        xCE = 1.0 - 1.0 / (22.0 * alpha)
        regime = np.select([x <= xc, x <= x_vcc, x <= xB, x <= xCE], [1, 2, 3, 4], 5)
        Dj = N14_CV * Fd * np.sqrt(C * FL)
    with np.errstate(divide="ignore", invalid="ignore"):
        Mj5 = np.sqrt(2.0 / (k - 1.0) * (22.0 ** e - 1.0))
        Mvc = np.sqrt(2.0 / (k - 1.0) * ((1.0 - x / FL ** 2) ** (-e) - 1.0))
        Mj = np.minimum(np.sqrt(2.0 / (k - 1.0) * ((1.0 / (alpha * (1.0 - x))) ** e - 1.0)), Mj5)
        Mj = np.where(regime == 5, Mj5, Mj)
        cvc = np.sqrt(k * P1 / rho1 * (1.0 - x / FL ** 2) ** e)
        cvcc = np.sqrt(2.0 * k / (k + 1.0) * P1 / rho1)
        Wm = np.where(regime == 1, 0.5 * m * (Mvc * cvc) ** 2, 0.5 * m * cvcc ** 2)
        sup = np.sqrt(np.maximum(Mj * Mj - 1.0, 0.0))
        fp = np.select([regime == 1, regime <= 3],
                       [STROUHAL_PEAK * Mvc * cvc / Dj, STROUHAL_PEAK * Mj * cvcc / Dj],
                       1.4 * STROUHAL_PEAK * cvcc / (Dj * sup))
        g = 10.0 ** An
        power = 6.6 * FL * FL
        eta = np.select([regime == 1, regime == 2, regime == 3],
                        [g * FL ** 2 * Mvc ** 3, g * x / x_vcc * Mj ** power, g * Mj ** power],
                        0.5 * g * Mj * Mj * np.sqrt(2.0) ** power)
        Wa = eta * Wm
        rho2 = rho1 * P2 / P1
        c2 = np.sqrt(k * R * T2 / M)
        M2 = 4.0 * m / (np.pi * Di * Di * rho2 * c2)
        Lg = 16.0 * np.log10(1.0 / (1.0 - np.minimum(M2, MACH_EXPANDER)))
        L_pi = 10.0 * np.log10(3.2e9 * Wa * rho2 * c2 / (Di * Di)) + Lg
        # the expander's own source where the outlet Mach number exceeds 0.3
        Up = 4.0 * m / (np.pi * rho2 * Di * Di)
        UR = Up * Di * Di / (EXPANDER_CONTRACTION * d * d)
        WmR = 0.5 * m * UR * UR * ((1.0 - d * d / (Di * Di)) ** 2 + 0.2)
        fpR = STROUHAL_PEAK * UR / d
        WaR = g * (UR / c2) ** 3 * WmR
        L_piR = 10.0 * np.log10(3.2e9 * WaR * rho2 * c2 / (Di * Di)) + Lg
        # ring, cut-off and coincidence frequencies of the pipe; the small-valve correction
        fr = STEEL_SOUND_SPEED / (np.pi * Di)
        fo = 0.25 * fr * c2 / AIR_SOUND_SPEED
        fg = np.sqrt(3.0) * AIR_SOUND_SPEED ** 2 / (np.pi * ts * STEEL_SOUND_SPEED)
        dTL = np.where(d > 0.15, 0.0, np.where(d >= 0.05, -16660.0 * d ** 3 + 6370.0 * d ** 2
                                                - 813.0 * d + 35.8, 9.0))
        f = BAND_HZ[None, :]
        col = (lambda a: a[:, None])

        def spectrum(L, peak):
            r = f / col(peak)
            return col(L) - 8.0 - 10.0 * np.log10((1.0 + (0.5 * r) ** 2.5)
                                                  * (1.0 + (0.5 / r) ** 1.7))
        Lf = spectrum(L_pi, fp)
        LfR = spectrum(L_piR, fpR)
        Lf = np.where(col(M2 > MACH_EXPANDER), 10.0 * np.log10(10.0 ** (0.1 * Lf)
                                                              + 10.0 ** (0.1 * LfR)), Lf)
        below = f < col(fo)
        Gx = np.where(below, (col(fo / fr)) ** (2.0 / 3.0) * (f / col(fo)) ** 4,
                      np.where(f < col(fr), np.sqrt(f / col(fr)), 1.0))
        Gy = np.where(below, np.where(col(fo < fg), col(fo / fg), 1.0),
                      np.where(f < col(fg), f / col(fg), 1.0))
        eta_s = np.sqrt(0.01 / f)
        den = (col(rho2 * c2) + 2.0 * np.pi * col(ts) * f * STEEL_DENSITY * eta_s) / (415.0 * Gy) \
            + 1.0
        TL = 10.0 * np.log10(8.25e-7 * (col(c2) / (col(ts) * f)) ** 2 * Gx / den
                             * (AIR_PRESSURE / STANDARD_ATMOSPHERE)) - col(dTL)
        Le = Lf + TL - col(10.0 * np.log10((Di + 2.0 * ts + 2.0) / (Di + 2.0 * ts)))
        total = 10.0 * np.log10(np.sum(10.0 ** (0.1 * (Le + A_WEIGHT_DB[None, :])), axis=1))
    return np.where(m > 0.0, total, np.nan)


def flp(FL, Kv, d, D1):
    """Combined recovery factor with an inlet reducer, IEC 60534-2-1 clause 7.3 [-]:
    ``FLP = FL / sqrt(1 + FL^2 zeta_i / N2 (C/d^2)^2)`` (Kv, d in mm)."""
    _, zeta_i = loss_coefficients(_arr(d) * 1e3, None if D1 is None else _arr(D1) * 1e3, None)
    return _arr(FL) / np.sqrt(1.0 + _arr(FL) ** 2 * zeta_i / N2_KV
                              * (_arr(Kv) / (_arr(d) * 1e3) ** 2) ** 2)
