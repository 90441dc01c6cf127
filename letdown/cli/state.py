"""``letdown state``: one fluid state from two of T, P, h, s."""
from __future__ import annotations

import json

from ..errors import InputError
from .common import EXIT_OK


def _gas_argument(text: str, normalise: bool) -> dict:
    from ..fluid.components import canonical_name
    out: dict = {}
    for part in text.split(","):
        if not part.strip():
            continue
        name, sep, value = part.partition("=")
        if not sep:
            raise InputError(f"'{part.strip()}' should read name=fraction", field="--gas")
        try:
            canon = canonical_name(name.strip())
        except InputError as exc:
            raise InputError(exc.message, field="--gas") from None
        try:
            x = float(value)
        except ValueError:
            raise InputError(f"'{value.strip()}' is not a number", field="--gas") from None
        if x != x or x in (float("inf"), float("-inf")):
            raise InputError(f"fraction of {name.strip()} is not a finite number", field="--gas")
        if x < 0.0:
            raise InputError(f"fraction of {name.strip()} must not be negative", field="--gas")
        if canon in out:
            raise InputError(f"'{name.strip()}' is listed twice", field="--gas")
        out[canon] = x
    total = sum(out.values())
    if not out or total <= 0.0:
        raise InputError("no component with a positive fraction", field="--gas")
    if abs(total - 1.0) > 1e-6 and not normalise:
        raise InputError(f"fractions sum to {total:.9g}, not 1; correct them or add --normalise",
                         field="--gas")
    return {k: v / total for k, v in out.items()}


def run(args) -> int:
    from ..fluid import Fluid
    from ..quantities import STANDARD_ATMOSPHERE, format_number, parse_quantity, unit_system

    atm = parse_quantity(args.atmosphere, "pressure", field="--atmosphere")
    spec = {}
    kinds = {"T": "temperature", "P": "pressure", "h": "molar_enthalpy", "s": "molar_entropy"}
    bare = {"h": "J/mol", "s": "J/(mol*K)"}
    for key, kind in kinds.items():
        text = getattr(args, key)
        if text is not None:
            spec[key] = parse_quantity(text, kind, atmosphere=atm, bare=bare.get(key),
                                       field=f"--{key}")
    if len(spec) != 2:
        raise InputError(f"give exactly two of --T, --P, --h, --s (got {len(spec)})",
                         field="state")
    gas = Fluid(_gas_argument(args.gas, args.normalise), model=args.model)
    st = gas.flash(**spec)
    props = {"T_K": st.T, "P_Pa": st.P, "vapour_fraction": st.vapour_fraction,
             "h_J_mol": st.h, "s_J_molK": st.s, "Z": st.Z, "density_kg_m3": st.density,
             "molar_mass_kg_mol": st.molar_mass}
    for extra in ("cp", "cv", "jt", "w"):
        if hasattr(st, extra):
            unit = {"cp": "cp_J_molK", "cv": "cv_J_molK", "jt": "jt_K_Pa", "w": "w_m_s"}[extra]
            props[unit] = getattr(st, extra)
    props = {k: float(v) for k, v in props.items()}
    if args.json:
        print(json.dumps({"model": gas.model,
                          "composition": dict(zip(gas.components, map(float, gas.zs))),
                          **{k: (v if v == v else None) for k, v in props.items()}}, indent=2))
        return EXIT_OK
    u = unit_system(args.units, atm if atm else STANDARD_ATMOSPHERE)
    rows = [("Temperature", u["T"](st.T), u["T"].label), ("Pressure", u["P"](st.P), u["P"].label),
            ("Vapour fraction", st.vapour_fraction, "-"),
            ("Enthalpy", u["h"](st.h), u["h"].label), ("Entropy", u["s"](st.s), u["s"].label),
            ("Z", st.Z, "-"), ("Density", u["density"](st.density), u["density"].label),
            ("Molar mass", u["molar_mass"](st.molar_mass), u["molar_mass"].label)]
    if "cp_J_molK" in props:
        rows.append(("cp", u["s"](props["cp_J_molK"]), u["s"].label))
    if "jt_K_Pa" in props:
        rows.append(("Joule-Thomson coefficient", props["jt_K_Pa"] * 1e5, "K/bar"))
    if "w_m_s" in props:
        rows.append(("Speed of sound", props["w_m_s"], "m/s"))
    print(f"{gas.model}: " + ", ".join(f"{c}={format_number(x, 4)}"
                                       for c, x in zip(gas.components, gas.zs)))
    width = max(len(r[0]) for r in rows)
    for label, value, unit in rows:
        print(f"  {label.ljust(width)}  {format_number(value).rjust(12)}  {unit}")
    return EXIT_OK
