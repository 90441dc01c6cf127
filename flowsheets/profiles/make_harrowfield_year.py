"""Write the fictional hourly profile of the Harrowfield gate station (demo data, invented).

A year of 8,760 hours: supply temperature following the ground (cold in February, warm in August),
a winter-peaking demand with morning and evening peaks, a slowly varying transmission pressure, and
the network pressure set a little higher in winter. Deterministic (fixed seed).

    python flowsheets/profiles/make_harrowfield_year.py > flowsheets/profiles/harrowfield-2026.csv
"""
import numpy as np


def main():
    rng = np.random.default_rng(2026)
    hours = np.arange(8760)
    day = hours / 24.0
    season = np.cos(2 * np.pi * (day - 35) / 365.0)          # +1 early February, -1 early August
    daily = (0.12 * np.exp(-0.5 * ((hours % 24 - 8) / 2.0) ** 2)
             + 0.10 * np.exp(-0.5 * ((hours % 24 - 19) / 2.5) ** 2) - 0.06)
    ground = 9.0 - 6.5 * season + 0.6 * rng.standard_normal(8760).cumsum() / 40.0
    T_in = ground + 0.8 * rng.standard_normal(8760)
    flow = 52000 + 30000 * season + 52000 * daily * (1 + 0.5 * season) + 1500 * rng.standard_normal(8760)
    flow = np.clip(flow, 12000, 90000)
    P_in = 63.0 + 1.5 * np.sin(2 * np.pi * day / 9.0) + 0.3 * rng.standard_normal(8760)
    P_out = 17.0 + 0.5 * season
    print("time,flow [Sm3/h],T_in [degC],P_in [barg],P_out [barg],ground_T [degC]")
    start = np.datetime64("2026-01-01T00:00")
    for h in hours:
        t = str(start + np.timedelta64(int(h), "h"))
        print(f"{t},{flow[h]:.0f},{T_in[h]:.2f},{P_in[h]:.2f},{P_out[h]:.2f},{ground[h]:.2f}")


if __name__ == "__main__":
    main()
