"""Reads the demo service through a client generated from its OpenAPI document.

The Rust test `tests/openapi_demo/client.rs` generates the package `tidetally_client` with
openapi-python-client (pinned in requirements.txt), puts it on PYTHONPATH and runs this
script against the demo service on a loopback port. The script only uses the generated
client and its typed models (no raw JSON), fetches one gauge's outlook and the all-gauges
outlook sets, and prints their key numbers as one JSON object on stdout, for the Rust test
to compare with the service's own JSON.

Usage: openapi_client_demo.py BASE_URL GAUGE SEASON
"""

import json
import sys

from tidetally_client import Client
from tidetally_client.api.outlooks import get_outlook, list_outlooks
from tidetally_client.models import Outlook, OutlookSet
from tidetally_client.types import UNSET


def headline(o: Outlook) -> dict:
    """The key numbers of one outlook, read through the generated model's attributes."""
    return {
        "gauge": o.gauge,
        "season": o.season,
        "season_days": o.season_days,
        "mean": o.mean,
        "median": o.median,
        "p10": o.p10,
        "p90": o.p90,
        "pmf_len": len(o.pmf),
        "pmf_sum": sum(o.pmf),
        "exceedance": [[e.days, e.probability] for e in o.exceedance],
        "terciles": [[t.reference.value, t.below, t.near, t.above] for t in o.terciles],
        "verdict": o.skill.verdict.value,
        "engine": o.engine.value,
        "family": o.family.value,
        "plan_on": [o.plan_on.days, o.plan_on.basis.value],
        "cautions": len(o.cautions),
    }


def outlook_set(s: OutlookSet) -> dict:
    """The key numbers of an outlook set."""
    return {
        "season": s.season,
        "outlooks": [headline(o) for o in s.outlooks],
        "unavailable": [u.gauge for u in s.unavailable],
    }


def expect(kind, answer, what):
    """The parsed answer, which must be of the generated model `kind`."""
    if not isinstance(answer, kind):
        sys.exit(f"{what}: expected a {kind.__name__}, got {answer!r}")
    return answer


def main() -> None:
    base_url, gauge, season = sys.argv[1:4]
    with Client(base_url=base_url, raise_on_unexpected_status=True, timeout=300.0) as client:
        one = expect(Outlook, get_outlook.sync(id=gauge, client=client), "getOutlook")
        every = expect(OutlookSet, list_outlooks.sync(client=client), "listOutlooks")
        of_season = expect(
            OutlookSet, list_outlooks.sync(client=client, season=season), "listOutlooks season"
        )
    if every.season not in (None, UNSET):
        sys.exit(f"the set without a season has season {every.season!r}")
    print(
        json.dumps(
            {
                "outlook": headline(one),
                "next": outlook_set(every),
                "season": outlook_set(of_season),
            }
        )
    )


if __name__ == "__main__":
    main()
