"""The old spelling of a renamed option is refused with the new one named.

"Defect" and "nonconformity" are different terms in quality-system usage
(ISO 9000:2015, Quality management systems -- Fundamentals and vocabulary,
3.6.9 and 3.6.10), so the per-unit counting option is ``--per-unit``.
"""

import pytest

from lotwise.cli import main


@pytest.mark.parametrize("args", [
    ["design", "--aql", "0.5", "--rql", "2", "--defects"],
    ["check", "--n", "20", "--c", "1", "--aql", "0.5", "--rql", "2", "--defects=1"],
])
def test_old_spelling_refused(args, capsys):
    assert main(args) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--defects" in err[0] and "--per-unit" in err[0]


def test_new_spelling_is_poisson(capsys):
    import json
    assert main(["design", "--aql", "0.5", "--rql", "2", "--per-unit", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["per_unit"] is True and out["model"] == "poisson"


def test_batch_old_column_refused(tmp_path, capsys):
    f = tmp_path / "cat.csv"
    f.write_text("part,lot_size,aql,rql,defects\nA,500,1%,6%,0\n")
    assert main(["batch", str(f), "--out", "-"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "per_unit" in err[0]


def test_version(capsys):
    from lotwise import __version__
    assert main(["--version"]) == 0
    assert capsys.readouterr().out.strip() == f"lotwise {__version__}"
