"""Make tests/fixtures/utide-arguments.json: UTide's nodal factor F, nodal angle U and
astronomical argument V (degrees) for the demo's twelve constituents at a few UTC times.

UTide (Codiga 2011, from t_tide, Pawlowicz et al. 2002) is an independent reference for the
generator's equilibrium arguments; its nodal corrections come from satellite sums rather than
Schureman's closed formulas, so f and u are expected to agree only approximately.

Run: python3 utide_arguments.py > ../fixtures/utide-arguments.json (with utide installed).
"""

import datetime as dt
import json
import sys

import numpy
import scipy
import utide
from utide import harmonics

TIMES = [
    "1980-01-01T00:00:00",
    "1987-06-15T06:00:00",
    "1995-03-21T12:00:00",
    "2000-01-01T12:00:00",
    "2006-09-30T18:00:00",
    "2013-12-25T03:00:00",
    "2019-07-04T21:00:00",
    "2026-11-30T23:00:00",
]
NAMES = ["M2", "S2", "N2", "K2", "K1", "O1", "P1", "Q1", "M4", "MS4", "SA", "SSA"]
LATITUDE = 41.6


def main():
    names = [str(n).strip() for n in harmonics.const.name]
    lind = [names.index(n) for n in NAMES]
    rows = []
    for text in TIMES:
        t = dt.datetime.fromisoformat(text)
        day = t.toordinal() + (t.hour * 3600 + t.minute * 60 + t.second) / 86400.0
        f, u, v = harmonics.FUV(numpy.array([day]), day, lind, LATITUDE, [0, 0, 0, 0])
        rows.append(
            {
                "time": text + "Z",
                "constituents": [
                    {
                        "name": n,
                        "f": float(f[0, k]),
                        "u_deg": float(u[0, k]) * 360.0,
                        "v_deg": float(v[0, k]) * 360.0,
                    }
                    for k, n in enumerate(NAMES)
                ],
            }
        )
    doc = {
        "source": "utide.harmonics.FUV (exact times, nodal/satellite corrections on)",
        "versions": {
            "python": sys.version.split()[0],
            "utide": utide.__version__,
            "numpy": numpy.__version__,
            "scipy": scipy.__version__,
        },
        "latitude": LATITUDE,
        "rows": rows,
    }
    json.dump(doc, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
