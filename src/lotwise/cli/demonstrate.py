"""``lotwise demonstrate``: what a test of n units with k failures shows (the
zero-failure demonstration and its exact bounds)."""

from __future__ import annotations

from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, Infeasible, parse_count, parse_risk


@app.command()
def demonstrate(
    confidence: Optional[str] = typer.Option(None, "--confidence", help="Confidence, e.g. 95%."),
    reliability: Optional[str] = typer.Option(None, "--reliability", help="Reliability to demonstrate, e.g. 99% (fraction conforming)."),
    failures: str = typer.Option("0", "--failures", help="Failures allowed (sizing) or found (with --tested)."),
    tested: Optional[str] = typer.Option(None, "--tested", help="Units already tested: give the exact upper bound instead of a sample size."),
    lot: Optional[str] = typer.Option(None, "--lot-size", "-N", help="Finite lot or build size (hypergeometric, exact)."),
    as_json: bool = common.JSON,
):
    """Confidence/reliability tests: the sample size demonstrating "C %
    confidence that at least R % conform" with k failures allowed, or the
    exact upper bound after n units tested with k failures."""
    from lotwise.analysis.reliability import demonstration_size, upper_bound

    if confidence is None:
        raise InputError("--confidence is required (for example --confidence 95%)")
    # "95%" is read as 95 * 0.01 = 0.9500000000000001; tidy such binary noise.
    C = _tidy(parse_risk(confidence, "--confidence"))
    R = _tidy(parse_risk(reliability, "--reliability")) if reliability is not None else None
    k = parse_count(failures, "--failures", minimum=0)
    N = common.lot_size(lot)
    if tested is not None:
        n = parse_count(tested, "--tested", minimum=1)
        if k > n:
            raise InputError(f"--failures ({k}) must not be greater than --tested ({n})")
        if N is not None and n > N:
            raise InputError(f"--tested ({n}) must not be greater than --lot-size ({N})")
        b = upper_bound(tested=n, failures=k, confidence=C, lot_size=N, reliability=R)
        rep = b.report()
        if as_json:
            common.emit_json(rep)
        else:
            typer.echo(_render_bound(rep))
        return
    if R is None:
        raise InputError("--reliability is required for sizing (for example --reliability 99%), "
                         "or give --tested for the bound from a test already run")
    try:
        d = demonstration_size(confidence=C, reliability=R, failures=k, lot_size=N)
    except Infeasible as exc:
        common.infeasible(exc, as_json, {"failures": k, "confidence": C, "reliability": R,
                                         "lot_size": N})
    rep = d.report()
    if as_json:
        common.emit_json(rep)
    else:
        from lotwise.core.quantities import format_pct

        lot_txt = f"lot of {N}, hypergeometric" if N else "no lot size, binomial"
        lines = [f"Demonstration test: {format_pct(C)} confidence that at least "
                 f"{format_pct(R)} conform ({lot_txt})",
                 f"  test n = {rep['n']} units, allow {k} failure{'s' if k != 1 else ''}", ""]
        lines += [f"  - {s}" for s in rep["statements"]]
        typer.echo("\n".join(lines))


def _tidy(x: float) -> float:
    return float(f"{x:.12g}")


def _render_bound(rep: dict) -> str:
    from lotwise.core.quantities import format_pct

    lot_txt = f"lot of {rep['lot_size']}" if rep["lot_size"] else "no lot size"
    lines = [f"Upper confidence bound after {rep['failures']} failure(s) in {rep['tested']} "
             f"tested ({lot_txt}, {rep['method']})",
             f"  nonconforming at most {format_pct(rep['upper_bound'], 4)}"
             + (f" ({rep['upper_bound_count']} units)" if "upper_bound_count" in rep else "")
             + f" at {format_pct(rep['confidence'])} confidence; reliability demonstrated "
             f"{format_pct(rep['reliability_demonstrated'], 4)}", ""]
    lines += [f"  - {s}" for s in rep["statements"]]
    return "\n".join(lines)
