"""Seeded generators of lot histories and part catalogues for tests and
benchmarks (simulated data with known parameters, not reference values)."""

from __future__ import annotations

import numpy as np
import pandas as pd

AQLS = ("0.065%", "0.1%", "0.15%", "0.25%", "0.4%", "0.65%", "1%", "1.5%", "2.5%", "4%")
RATIOS = (2, 2.5, 3, 4, 5, 6, 8, 10)


def history(lots: int, *, p: float, seed: int, suppliers=("Acme",), parts=("H-100",),
            plan=(80, 2), lot_size=(500, 5000), start="2024-01-01") -> pd.DataFrame:
    """A lot log in the documented columns: every lot sampled with ``plan``
    from a process at ``p``; the disposition follows the plan."""
    rng = np.random.default_rng(seed)
    n, c = plan
    size = rng.integers(lot_size[0], lot_size[1] + 1, lots)
    sample = np.minimum(n, size)
    found = rng.binomial(sample, p)
    dates = pd.Timestamp(start) + pd.to_timedelta(np.sort(rng.integers(0, 3 * 365, lots)),
                                                  unit="D")
    return pd.DataFrame({
        "date": dates.strftime("%Y-%m-%d"),
        "supplier": rng.choice(list(suppliers), lots),
        "part": rng.choice(list(parts), lots),
        "lot_id": [f"L{i:06d}" for i in range(lots)],
        "lot_size": size,
        "sample_size": sample,
        "found": found,
        "plan": f"n={n},c={c}",
        "disposition": np.where(found <= c, "accept", "reject"),
    })


def catalogue(rows: int, *, seed: int, distinct_lots: int | None = None,
              process_share: float = 0.2) -> pd.DataFrame:
    """A part catalogue: AQLs from the usual preferred values, RQL a multiple
    of the AQL, lot sizes from 50 to 500,000 (or from ``distinct_lots``
    standard sizes), a share of rows without a lot size (process)."""
    rng = np.random.default_rng(seed)
    aql_txt = rng.choice(AQLS, rows)
    aql = np.array([float(a.rstrip("%")) for a in aql_txt]) / 100
    rql = np.minimum(aql * rng.choice(RATIOS, rows), 0.3)
    if distinct_lots:
        pool = np.unique(np.round(np.geomspace(50, 500_000, distinct_lots)).astype(int))
        lots = rng.choice(pool, rows)
    else:
        lots = rng.integers(50, 500_001, rows)
    lot_txt = np.where(rng.random(rows) < process_share, "", lots.astype(str))
    return pd.DataFrame({
        "part": [f"P{i:06d}" for i in range(rows)],
        "lot_size": lot_txt,
        "aql": aql_txt,
        "rql": [f"{100 * r:.4g}%" for r in rql],
        "alpha": rng.choice(["", "5%", "0.10"], rows, p=[0.8, 0.1, 0.1]),
        "beta": rng.choice(["", "10%", "0.05"], rows, p=[0.8, 0.1, 0.1]),
        "deliveries_per_year": rng.choice(["12", "52", "250", ""], rows),
    })
