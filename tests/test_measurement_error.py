"""A gauge's error in one-limit variables plans: OC and design at the true fraction
nonconforming.

References (named again beside each table):

* seeded Monte Carlo of measured samples: true values from N(mu, sigma^2), each
  measured with an independent N(0, sigma_m^2) error, the plan's own rule applied to
  the measured values; agreement within 4 standard errors (written here
  independently of the library: numpy only);
* sigma known, the plan's sigma the process's: Pa = Phi(sqrt(n) r (z_p - k)),
  r = sigma / sqrt(sigma^2 + sigma_m^2), since the measured mean is
  N(mu, (sigma^2 + sigma_m^2)/n) -- derived from the normal model (E. G. Schilling and
  D. V. Neubauer, 2nd ed., CRC Press, 2009, on measurement error, from memory);
  evaluated with mpmath (30 digits);
* sigma_m -> 0 recovers the plan's own curve (continuity; common practice, no source).
"""

from __future__ import annotations

import json

import mpmath
import numpy as np
import pytest

from lotwise.cli import main
from lotwise.core.types import Targets
from lotwise.families.measured import (GaugeError, MeasuredPlan, apparent_fraction,
                                       design_measured, gauge_for)
from lotwise.families.variables import VariablesPlan

mpmath.mp.dps = 30

LEVELS = np.array([0.002, 0.01, 0.03, 0.06, 0.12])


def _run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def _plan(sigma, sigma_is=None, sm=0.4, process_sd=None):
    inner = VariablesPlan(n=30, k=1.85, sigma=sigma, limit="upper", upper=10.0,
                          sigma_value=1.0 if sigma == "known" else None)
    return MeasuredPlan(inner=inner, gauge=gauge_for(inner, sm, sigma_is=sigma_is,
                                                     process_sd=process_sd))


MODES = [  # sigma, sigma_is, process_sd
    ("known", "process", None),
    ("known", "observed", None),
    ("unknown", None, 1.3),
]


# sigma_m -> 0: the plan's own curve (continuity, no source), 1e-6 at sigma_m = 1e-7.
@pytest.mark.parametrize("sigma,sigma_is,psd", MODES)
def test_vanishing_gauge_error_recovers_the_plan(sigma, sigma_is, psd):
    plan = _plan(sigma, sigma_is, sm=1e-7, process_sd=psd)
    assert np.allclose(plan.pa(LEVELS), plan.inner.pa(LEVELS), atol=1e-6)


# Closed form, sigma known and the plan's sigma the process's (normal model, mpmath), 1e-12.
@pytest.mark.parametrize("sm", [0.2, 0.5, 1.0])
def test_known_process_sigma_closed_form(sm):
    plan = _plan("known", "process", sm=sm)
    r = 1 / mpmath.sqrt(1 + mpmath.mpf(sm) ** 2)
    for p in LEVELS:
        z = -mpmath.sqrt(2) * mpmath.erfinv(2 * mpmath.mpf(p) - 1)
        want = mpmath.ncdf(mpmath.sqrt(30) * r * (z - mpmath.mpf("1.85")))
        assert float(plan.pa(p)) == pytest.approx(float(want), abs=1e-12)


def _simulate(plan: MeasuredPlan, p: float, reps: int, seed: int) -> tuple[float, float]:
    """Pa by simulation: the process mean set for true fraction p beyond U = 10."""
    from statistics import NormalDist

    g, inner = plan.gauge, plan.inner
    mu = 10.0 - NormalDist().inv_cdf(1 - p) * g.process_sd
    rng = np.random.default_rng(seed)
    x = rng.normal(mu, g.process_sd, size=(reps, inner.n))
    y = x + rng.normal(0.0, g.measurement_sd, size=x.shape)
    ybar = y.mean(axis=1)
    spread = float(inner.sigma_value) if inner.sigma == "known" else y.std(axis=1, ddof=1)
    acc = (10.0 - ybar) / spread >= inner.k
    pa = float(acc.mean())
    return pa, float(np.sqrt(max(pa * (1 - pa), 1.0 / reps) / reps))


# Seeded Monte Carlo of measured samples (independent numpy simulation), 4 standard errors.
@pytest.mark.parametrize("sigma,sigma_is,psd", MODES)
@pytest.mark.parametrize("p", [0.01, 0.04, 0.08])
def test_monte_carlo_of_measured_samples(sigma, sigma_is, psd, p):
    plan = _plan(sigma, sigma_is, sm=0.6, process_sd=psd)
    got, se = _simulate(plan, p, 20_000, seed=int(p * 1e4) + len(sigma))
    assert abs(float(plan.pa(p)) - got) <= 4 * se


# Designs hold both risks at the true levels and are the smallest: with sigma known
# (process) no k works at n - 1, because Pa = Phi(sqrt(n) r (z_p - k)) needs
# sqrt(n) r (z_AQL - z_RQL) >= z_alpha + z_beta (normal model, mpmath).
DESIGNS = [  # gauge args, design options
    ({"measurement_sd": 0.5, "sigma_is": "process"},
     {"sigma": "known", "sigma_value": 1.0, "limit": "upper", "upper": 10.0}),
    ({"measurement_sd": 0.3, "sigma_is": "observed"},
     {"sigma": "known", "sigma_value": 1.0, "limit": "upper", "upper": 10.0}),
    ({"measurement_sd": 0.5, "process_sd": 1.0}, {"sigma": "unknown", "limit": "upper"}),
]


@pytest.mark.parametrize("gauge,opts", DESIGNS)
def test_design_holds_true_risks(gauge, opts):
    t = Targets(aql=0.01, rql=0.06)
    plan, _d, guard = design_measured(gauge, aql=0.01, rql=0.06, alpha=0.05, beta=0.10, **opts)
    assert plan.risks(t, None, plan.exact_model).meets
    assert guard["beta"] == pytest.approx(0.10, abs=1e-9)
    if gauge.get("sigma_is") == "process":
        r = 1 / mpmath.sqrt(1 + mpmath.mpf(gauge["measurement_sd"]) ** 2)
        za, zr = (-mpmath.sqrt(2) * mpmath.erfinv(2 * mpmath.mpf(q) - 1) for q in ("0.01",
                                                                                 "0.06"))
        need = -mpmath.sqrt(2) * mpmath.erfinv(2 * mpmath.mpf("0.05") - 1) \
            - mpmath.sqrt(2) * mpmath.erfinv(2 * mpmath.mpf("0.10") - 1)
        n = plan.inner.n
        assert mpmath.sqrt(n) * r * (za - zr) >= need
        assert mpmath.sqrt(n - 1) * r * (za - zr) < need


def test_apparent_fraction_direction():
    # a gauge's spread makes a small true fraction look larger (z shrinks by r < 1):
    # common practice, no source
    assert apparent_fraction(0.01, GaugeError(measurement_sd=0.5, process_sd=1.0).ratio) > 0.01


# sigma_m = 0: every figure equals today's (the command line's JSON byte for byte).
ZERO = [
    ("check", "--plan", "variables: n=42,k=1.901,upper=25", "--aql", "1%", "--rql", "6%",
     "--process-sd", "1"),
    ("oc", "--plan", "variables: n=42,k=1.901,upper=25", "--points", "6", "--process-sd", "1"),
    ("design", "--scheme", "variables", "--aql", "1%", "--rql", "6%", "--sigma", "known",
     "--sigma-value", "1", "--upper", "10", "--sigma-is", "process"),
]


@pytest.mark.parametrize("args", ZERO)
def test_zero_measurement_sd_changes_nothing(capsys, args):
    cmd = list(args)
    extra = cmd[-2:]
    base = cmd[:-2]
    _, plain, _ = _run(capsys, *base, "--json")
    _, zero, err = _run(capsys, *base, *extra, "--measurement-sd", "0", "--json")
    assert zero == plain, err


BAD = [  # args, text in the one-line message
    (("check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "6%", "--measurement-sd", "0.3"),
     "--measurement-sd (0.3) applies to variables plans"),
    (("oc", "--plan", "variables: n=42,k=1.901,upper=25", "--measurement-sd", "0.3"),
     "--process-sd (None)"),
    (("oc", "--plan", "variables: n=42,k=1.901,sigma=1,upper=25",
      "--measurement-sd", "0.3"), "--sigma-is (None) must be one of: process, observed"),
    (("oc", "--plan", "variables: n=42,k=1.901,upper=25", "--sigma-is", "process"),
     "--sigma-is (process) applies with --measurement-sd"),
    (("oc", "--plan", "variables: n=42,k=1.901,upper=25", "--measurement-sd", "-1"),
     "--measurement-sd (-1)"),
    (("design", "--aql", "1%", "--rql", "6%", "--measurement-sd", "0.3"),
     "applies to --scheme variables"),
]


@pytest.mark.parametrize("args,text", BAD)
def test_bad_gauge_options(capsys, args, text):
    code, out, err = _run(capsys, *args)
    assert code == 2 and out == ""
    assert "\n" not in err.strip() and text in err


def test_oc_json_has_error_free_column(capsys):
    code, out, _ = _run(capsys, "oc", "--plan", "variables: n=42,k=1.901,upper=25",
                        "--measurement-sd", "0.3", "--process-sd", "1", "--at", "0.02",
                        "--json")
    rep = json.loads(out)
    assert rep["columns"] == ["p", "pa", "error_free_pa"]
    plain = VariablesPlan(n=42, k=1.901, sigma="unknown", limit="upper", upper=25.0)
    assert rep["rows"][0][2] == pytest.approx(float(plain.pa(0.02)), abs=1e-15)
    assert rep["measurement_error"]["measurement_sd"] == 0.3
