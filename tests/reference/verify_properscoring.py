"""Make tests/fixtures/verify/properscoring.json: reference scores from the properscoring
and scikit-learn libraries (PyPI) for tests/verify_reference.rs.

Run from the repository root with numpy, properscoring and scikit-learn installed:
    python3 tests/reference/verify_properscoring.py

Cases are drawn with a seeded numpy generator; they are synthetic, not observations.
- integer_ensembles: ensembles of integer members (counts of days) with an integer
  observation. Their empirical distribution is a count distribution, so the discrete CRPS
  sum_k (F(k) - 1{y <= k})^2 must equal properscoring's crps_ensemble, and the Brier score of
  P(N >= k) must equal threshold_brier_score at the threshold k - 0.5.
- real_ensembles: real-valued members for the continuous ensemble CRPS (Hersbach 2000).
- binary: probabilities and 0/1 outcomes for brier_score.
- roc: probabilities on a 0.05 grid (so thresholds tie) and 0/1 outcomes for scikit-learn's
  roc_curve (every threshold kept) and roc_auc_score.
"""

import json
from importlib.metadata import version
from pathlib import Path

import numpy as np
import properscoring as ps
from sklearn.metrics import roc_auc_score, roc_curve

SEED = 20261201
EXCEED_DAYS = [1, 3, 5, 10, 20]


def main() -> None:
    rng = np.random.default_rng(SEED)

    integer_cases = []
    for _ in range(60):
        members_count = int(rng.integers(3, 41))
        mean = float(rng.choice([0.3, 1.0, 4.0, 9.0, 20.0]))
        size = float(rng.choice([0.5, 2.0, 50.0]))
        p = size / (size + mean)
        members = rng.negative_binomial(size, p, members_count).astype(float)
        # Observations sometimes far outside the ensemble, sometimes zero.
        observed = int(rng.negative_binomial(size, size / (size + mean * rng.choice([0.5, 1.0, 3.0]))))
        crps = float(ps.crps_ensemble(float(observed), members))
        thresholds = np.array([k - 0.5 for k in EXCEED_DAYS])
        # One-case arrays: properscoring 0.1 indexes 0-d arrays in a way numpy 2 rejects.
        brier = ps.threshold_brier_score(np.array([float(observed)]), members[np.newaxis, :], thresholds)[0]
        integer_cases.append(
            {
                "members": [int(m) for m in members],
                "observed": observed,
                "crps": crps,
                "brier": [float(b) for b in np.atleast_1d(brier)],
            }
        )

    real_cases = []
    for _ in range(30):
        members = rng.normal(rng.normal(0.0, 2.0), rng.uniform(0.2, 3.0), int(rng.integers(2, 30)))
        observed = float(rng.normal(0.0, 3.0))
        real_cases.append(
            {
                "members": [float(m) for m in members],
                "observed": observed,
                "crps": float(ps.crps_ensemble(observed, members)),
            }
        )

    probabilities = rng.uniform(0.0, 1.0, 50)
    outcomes = (rng.uniform(0.0, 1.0, 50) < probabilities).astype(float)
    binary = {
        "probabilities": [float(p) for p in probabilities],
        "outcomes": [int(o) for o in outcomes],
        "scores": [float(s) for s in ps.brier_score(outcomes, probabilities)],
    }

    roc_probabilities = np.round(rng.uniform(0.0, 1.0, 80) * 20.0) / 20.0
    roc_outcomes = (rng.uniform(0.0, 1.0, 80) < roc_probabilities).astype(int)
    fpr, tpr, thresholds = roc_curve(roc_outcomes, roc_probabilities, drop_intermediate=False)
    roc = {
        "probabilities": [float(p) for p in roc_probabilities],
        "outcomes": [int(o) for o in roc_outcomes],
        "false_alarm_rate": [float(x) for x in fpr],
        "hit_rate": [float(x) for x in tpr],
        # The first threshold is +infinity (never "yes"); JSON has no infinity, so null.
        "thresholds": [None if np.isinf(t) else float(t) for t in thresholds],
        "area": float(roc_auc_score(roc_outcomes, roc_probabilities)),
    }

    fixture = {
        "source": "properscoring crps_ensemble, threshold_brier_score, brier_score; scikit-learn roc_curve, roc_auc_score",
        "script": "tests/reference/verify_properscoring.py",
        "seed": SEED,
        "versions": {
            "python": __import__("platform").python_version(),
            "numpy": version("numpy"),
            "properscoring": version("properscoring"),
            "scikit-learn": version("scikit-learn"),
        },
        "exceed_days": EXCEED_DAYS,
        "integer_ensembles": integer_cases,
        "real_ensembles": real_cases,
        "binary": binary,
        "roc": roc,
    }
    out = Path("tests/fixtures/verify/properscoring.json")
    out.write_text(json.dumps(fixture, indent=1) + "\n")
    print(f"wrote {out}")


if __name__ == "__main__":
    main()
