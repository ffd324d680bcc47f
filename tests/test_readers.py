"""One reader for every input file: the encodings and separators spreadsheet and
text programs write are read alike by ``batch``, ``records``, ``judge`` and plan
files, and give the same answers as the plain UTF-8, comma-separated file.

Sources: the Unicode standard's byte-order marks (UTF-8 EF BB BF, UTF-16 FF FE /
FE FF; The Unicode Standard, version 15.0, 2022, section 23.8, from memory) and
RFC 4180 (Y. Shafranovich, 2005) for quoted fields; thousands separators as
``--lot-size 1,000`` accepts them (common practice, no source).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from lotwise.cli import main

ROOT = Path(__file__).resolve().parent.parent


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def _variants(text: str):
    """(name, bytes) of one table written the ways users' programs write it."""
    return [("utf-8", text.encode("utf-8")), ("utf-8 with BOM", b"\xef\xbb\xbf" + text.encode()),
            ("utf-16", text.encode("utf-16")), ("latin-1", text.encode("latin-1")),
            ("tabs", text.replace(",", "\t").encode("utf-8")),
            ("semicolons", text.replace(",", ";").encode("utf-8"))]


@pytest.mark.parametrize("variant", range(6))
def test_batch_reads_every_encoding_and_separator(tmp_path, capsys, variant):
    text = "part,lot_size,aql,rql\nP-1,5000,0.65%,4%\nP-2,60,1.5%,12%\nP-\u00e9,500,1%,8%\n"
    name, raw = _variants(text)[variant]
    (tmp_path / "plain.csv").write_bytes(text.encode())
    (tmp_path / "cat.csv").write_bytes(raw)
    _, ref, _ = run(capsys, "batch", str(tmp_path / "plain.csv"), "--out", "-")
    code, out, err = run(capsys, "batch", str(tmp_path / "cat.csv"), "--out", "-")
    assert code == 0, (name, err)
    assert out == ref, name  # the same plans, row for row


@pytest.mark.parametrize("variant", range(4))
def test_records_read_every_encoding(tmp_path, capsys, variant):
    text = (ROOT / "examples" / "lots.csv").read_text()
    name, raw = _variants(text)[variant]
    (tmp_path / "lots.csv").write_bytes(raw)
    _, ref, _ = run(capsys, "records", str(ROOT / "examples" / "lots.csv"), "--plans",
                    str(ROOT / "plans"), "--json")
    code, out, err = run(capsys, "records", str(tmp_path / "lots.csv"), "--plans",
                         str(ROOT / "plans"), "--json")
    assert code in (0, 1), (name, err)
    a, b = json.loads(out), json.loads(ref)
    assert (a["rows_used"], a["groups"], a["findings"]) == (b["rows_used"], b["groups"],
                                                            b["findings"]), name


def test_records_take_quoted_thousands(tmp_path, capsys):
    lines = (ROOT / "examples" / "lots.csv").read_text().splitlines()
    row = lines[1].replace(",60,27,", ',"1,060",27,')
    (tmp_path / "lots.csv").write_text(lines[0] + "\n" + row + "\n")
    code, out, err = run(capsys, "records", str(tmp_path / "lots.csv"), "--plans",
                         str(ROOT / "plans"), "--json")
    assert "skipped" not in err, err
    assert json.loads(out)["rows_used"] == 1


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig", "utf-16", "latin-1"])
def test_judge_reads_every_encoding(tmp_path, capsys, encoding):
    text = "Durchmesser \u00e4\n" + "\n".join(
        (ROOT / "examples" / "shafts.csv").read_text().splitlines()[1:]) + "\n"
    (tmp_path / "m.csv").write_bytes(text.encode(encoding))
    plan = "variables: n=42,k=1.901,upper=25.0"
    _, ref, _ = run(capsys, "judge", "--plan", plan, str(ROOT / "examples" / "shafts.csv"),
                    "--json")
    code, out, err = run(capsys, "judge", "--plan", plan, str(tmp_path / "m.csv"), "--json")
    assert code in (0, 1), err
    assert json.loads(out)["xbar"] == json.loads(ref)["xbar"]
    assert json.loads(out)["verdict"] == json.loads(ref)["verdict"]


@pytest.mark.parametrize("encoding", ["utf-8-sig", "utf-16"])
def test_plan_file_with_a_byte_order_mark(tmp_path, capsys, encoding):
    src = ROOT / "plans" / "qp-1104-relief-spring.toml"
    (tmp_path / "p.toml").write_bytes(src.read_text().encode(encoding))
    shutil.copy(src, tmp_path / "ref.toml")
    _, ref, _ = run(capsys, "check", str(tmp_path / "ref.toml"), "--json")
    code, out, err = run(capsys, "check", str(tmp_path / "p.toml"), "--json")
    assert code in (0, 1), err
    pick = lambda s: [(c["characteristic"], c["n"], c["meets"]) for c in
                      json.loads(s)["characteristics"]]
    assert pick(out) == pick(ref)
