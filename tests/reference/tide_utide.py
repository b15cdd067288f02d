"""Makes the utide reference fixtures for tests/tide_reference.rs.

Synthetic records (one year of hourly levels with an injected gap and red noise) for 2005
(lunar node near 0 deg) and 1997 (node near 180 deg) are written to
tests/fixtures/tide/synthetic-YEAR.csv, analysed with utide (a general-purpose tidal analysis
library from PyPI, Codiga 2011), and utide's constituents are written to
tests/fixtures/tide/utide-YEAR.json together with the exact package versions.

The record is a plain sum of cosines at the constituents' speeds (Schureman 1958, Table 2
speeds) with arbitrary phases: it does not depend on any phase convention, so both analyses
see the same data and their Greenwich phases can be compared.

Run: python3 -m venv /tmp/utenv && /tmp/utenv/bin/pip install utide &&
     /tmp/utenv/bin/python tests/reference/tide_utide.py
"""

import json
import platform
from importlib.metadata import version
from pathlib import Path

import numpy as np
import utide

HERE = Path(__file__).resolve().parent
FIXTURES = HERE.parent / "fixtures" / "tide"

# name in utide, speed (deg/h, Schureman 1958), amplitude (m), arbitrary phase (deg)
SIGNAL = [
    ("M2", 28.9841042, 1.10, 40.0),
    ("S2", 30.0000000, 0.28, 75.0),
    ("N2", 28.4397295, 0.22, 15.0),
    ("K2", 30.0821373, 0.08, 70.0),
    ("K1", 15.0410686, 0.36, 200.0),
    ("O1", 13.9430356, 0.27, 185.0),
    ("P1", 14.9589314, 0.12, 195.0),
    ("Q1", 13.3986609, 0.05, 170.0),
    ("NU2", 28.5125831, 0.045, 20.0),
    ("L2", 29.5284789, 0.03, 60.0),
    ("M4", 57.9682084, 0.04, 300.0),
    ("MS4", 58.9841042, 0.025, 330.0),
    ("MN4", 57.4238337, 0.015, 280.0),
    ("M6", 86.9523127, 0.01, 100.0),
    ("MK3", 44.0251729, 0.012, 240.0),
    ("SSA", 0.0821373, 0.05, 250.0),
    ("MM", 0.5443747, 0.02, 30.0),
    ("MF", 1.0980331, 0.02, 120.0),
]

# Constituents both analyses fit (utide names).
FIT = [name for name, *_ in SIGNAL] + ["MU2", "2N2", "J1", "OO1", "RHO1", "T2", "S4", "MSF"]

LATITUDE = 44.0


def make(year: int) -> None:
    rng = np.random.default_rng(year * 10000 + 101)
    hours = np.arange(365 * 24, dtype=float)
    level = np.full(hours.shape, 0.80)
    for _, speed, amp, phase in SIGNAL:
        level += amp * np.cos(np.radians(speed * hours - phase))
    # AR(1) noise: lag-one correlation 0.9, standard deviation 0.05 m.
    noise = np.zeros_like(hours)
    innovations = rng.normal(0.0, 0.05 * np.sqrt(1 - 0.9**2), hours.size)
    for k in range(1, hours.size):
        noise[k] = 0.9 * noise[k - 1] + innovations[k]
    level += noise
    level = np.round(level, 4)
    level[3000:3200] = np.nan  # an eight-day gap

    start = np.datetime64(f"{year}-01-01T00:00:00")
    times = start + hours.astype("timedelta64[h]")
    FIXTURES.mkdir(parents=True, exist_ok=True)
    with open(FIXTURES / f"synthetic-{year}.csv", "w") as out:
        out.write("time,level\n")
        for t, x in zip(times, level):
            out.write(f"{np.datetime_as_string(t, unit='s')}Z,{'' if np.isnan(x) else f'{x:.4f}'}\n")

    ok = ~np.isnan(level)
    coef = utide.solve(
        times[ok],
        level[ok],
        lat=LATITUDE,
        constit=FIT,
        method="ols",
        conf_int="linear",
        trend=False,
        nodal=True,
        phase="Greenwich",
        verbose=False,
    )
    constituents = [
        {
            "name": str(name),
            "amplitude": float(a),
            "phase_deg": float(g),
            "amplitude_ci95": float(ac),
            "phase_ci95_deg": float(gc),
        }
        for name, a, g, ac, gc in zip(coef.name, coef.A, coef.g, coef.A_ci, coef.g_ci)
    ]
    fixture = {
        "source": "utide.solve(method='ols', conf_int='linear', trend=False, nodal=True, phase='Greenwich')",
        "record": f"synthetic-{year}.csv",
        "latitude": LATITUDE,
        "mean": float(coef.mean),
        "versions": {
            "python": platform.python_version(),
            "utide": version("utide"),
            "numpy": version("numpy"),
            "scipy": version("scipy"),
        },
        "constituents": constituents,
    }
    with open(FIXTURES / f"utide-{year}.json", "w") as out:
        json.dump(fixture, out, indent=1)
        out.write("\n")


if __name__ == "__main__":
    make(2005)
    make(1997)
