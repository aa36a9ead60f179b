"""An invented demo table: duty runs logged by a fleet of irrigation pumps.

The data are synthetic, made with a seeded random generator; they describe no real fleet. They follow
textbook pump physics closely enough to be worth exploring:

* pump affinity laws: flow scales with speed x impeller diameter, head with their squares;
* shaft power = hydraulic power (rho * g * Q * H) / efficiency;
* efficiency peaks at the best-efficiency flow and falls as impellers wear.

The story to discover: at the sandy site (``Red Gully``) sand wears the impellers, so its older units
run at low efficiency with high vibration. A handful of runs are sensor glitches (outliers).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

SITES = ["Alder Creek", "Bramble Flats", "Red Gully", "Stonebridge", "Willow Bend"]
SANDY_SITE = "Red Gully"
IMPELLERS_MM = [180, 200, 224, 250]
SPEEDS_RPM = [1450, 2900]

_RHO_G = 1000.0 * 9.81  # water density x gravity, N/m^3


def pump_fleet(n: int = 5000, seed: int = 7) -> pd.DataFrame:
    """Generate ``n`` duty runs of the invented pump fleet (reproducible for a given ``seed``).

    Columns: site (category), impeller_mm, speed_rpm, flow_m3h, head_m, power_kw, efficiency_pct,
    vibration_mm_s, install_year, water_temp_c, sand_ppm (with sensor gaps), fault (bool),
    last_service (date).
    """
    if n < 1:
        raise ValueError(f"n must be at least 1, got {n}")
    rng = np.random.default_rng(seed)
    site_idx = rng.choice(len(SITES), size=n, p=[0.24, 0.2, 0.18, 0.22, 0.16])
    sandy = site_idx == SITES.index(SANDY_SITE)

    impeller = rng.choice(IMPELLERS_MM, size=n, p=[0.2, 0.3, 0.3, 0.2]).astype(np.int64)
    nominal = rng.choice(SPEEDS_RPM, size=n, p=[0.55, 0.45])
    speed = nominal * (1 + rng.normal(0, 0.025, n))  # drive variation

    install_year = rng.integers(2008, 2026, size=n)
    age = 2026 - install_year

    # wear grows with age, about four times faster in sand
    wear = np.clip(age * np.where(sandy, 0.022, 0.005) + rng.normal(0, 0.01, n), 0, 0.45)

    ratio_n, ratio_d = speed / 2900.0, impeller / 250.0
    q_best = 120.0 * ratio_n * ratio_d  # m^3/h at the best-efficiency point
    h_scale = 62.0 * ratio_n**2 * ratio_d**2  # m
    x = np.clip(rng.normal(1.0, 0.18, n), 0.35, 1.5)  # operating flow / best-efficiency flow
    flow = q_best * x
    head = h_scale * (1.3 - 0.3 * x**2) * (1 - 0.6 * wear) * (1 + rng.normal(0, 0.015, n))

    eta_peak = 0.82 - 0.9 * wear
    eta = np.clip(eta_peak * (1 - 0.6 * (x - 1) ** 2) + rng.normal(0, 0.01, n), 0.15, 0.9)
    power = _RHO_G * (flow / 3600.0) * head / eta / 1000.0  # kW

    vibration = (1.2 + 4.0 * np.abs(x - 1) + 18.0 * wear) * rng.lognormal(0, 0.18, n)

    site_temp = np.array([14.0, 17.0, 21.0, 12.0, 16.0])[site_idx]
    water_temp = site_temp + rng.normal(0, 2.5, n)

    sand = rng.lognormal(np.where(sandy, np.log(420), np.log(35)), 0.45, n)
    gap_rate = np.where(sandy, 0.09, 0.025)  # the sandy site's sensors clog more often
    sand = np.where(rng.random(n) < gap_rate, np.nan, np.round(sand, 1))

    fault = rng.random(n) < 1 / (1 + np.exp(-(vibration - 9.0)))

    days_since = rng.integers(0, 700, size=n) + (age * 8)
    last_service = pd.Timestamp("2026-11-30") - pd.to_timedelta(np.minimum(days_since, 1400), unit="D")

    # a handful of sensor glitches
    k = max(1, n // 800)
    glitch = rng.choice(n, size=k, replace=False)
    flow[glitch] *= rng.uniform(2.0, 3.0, k)
    vibration[glitch[: k // 2 + 1]] += rng.uniform(15, 25, k // 2 + 1)

    return pd.DataFrame(
        {
            "site": pd.Categorical.from_codes(site_idx, categories=SITES),
            "impeller_mm": impeller,
            "speed_rpm": np.round(speed, 0),
            "flow_m3h": np.round(flow, 2),
            "head_m": np.round(head, 2),
            "power_kw": np.round(power, 2),
            "efficiency_pct": np.round(100 * eta, 1),
            "vibration_mm_s": np.round(vibration, 2),
            "install_year": install_year.astype(np.int64),
            "water_temp_c": np.round(water_temp, 1),
            "sand_ppm": sand,
            "fault": fault,
            "last_service": last_service,
        },
        index=pd.RangeIndex(n, name="run"),
    )


#: the numeric columns, a good default axis set while category/date axes are not needed
NUMERIC_AXES = [
    "impeller_mm",
    "speed_rpm",
    "flow_m3h",
    "head_m",
    "power_kw",
    "efficiency_pct",
    "vibration_mm_s",
    "install_year",
    "water_temp_c",
    "sand_ppm",
]
