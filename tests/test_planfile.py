"""Plan-file validation: every malformed file gets the exact message expected
(file, key path, bad value, what is allowed)."""

from __future__ import annotations

import pytest

from lotwise.documents.planfile import load, loads
from lotwise.core.quantities import InputError

GOOD = '''
[part]
id = "P-1"
[lot]
size = 500
[[characteristic]]
id = "M1"
class = "major"
aql = "1%"
rql = "8%"
'''

F = "plans/p.toml"

# (file text, exact message) -- the messages are the contract users read.
MALFORMED = [
    ("[part\nid = 1", None),  # TOML syntax: message starts with the file name
    ('[[characteristic]]\nid="M1"\nclass="major"\naql="1%"\nrql="8%"',
     f"{F}: [part] is missing; it is required"),
    (GOOD.replace('id = "P-1"', 'id = 7'), f"{F}: part.id (7) must be text in quotes"),
    (GOOD.replace('id = "P-1"', 'id = ""'), f"{F}: part.id ('') must not be empty"),
    (GOOD.replace('id = "P-1"', 'id = "P-1"\nsuplier = "x"'),
     f"{F}: part.suplier: unknown key; did you mean 'supplier'?"),
    (GOOD.replace("size = 500", "sise = 500"), f"{F}: lot.sise: unknown key; did you mean 'size'?"),
    (GOOD.replace("size = 500", 'size = "500"'),
     f"{F}: lot.size ('500') must be a whole number of at least 1, written without quotes"),
    (GOOD.replace("size = 500", "size = 0"), f"{F}: lot.size (0) must be at least 1"),
    (GOOD.replace("size = 500", 'size = 500\ncounts = "per_unit"'),
     f"{F}: lot.counts ('per_unit') must be one of: 'items', 'nonconformities'"),
    (GOOD + '[sampling]\nmodel = "normal"\n',
     f"{F}: sampling.model (normal) must be one of: hypergeometric, binomial, poisson"),
    (GOOD + "[sampling]\nn = 600\n", f"{F}: sampling.n (600) must not be greater than lot.size (500)"),
    (GOOD + "[sampling]\nmax_n = -3\n", f"{F}: sampling.max_n (-3) must be at least 1"),
    (GOOD + "[sampling]\ncost_per_unit = -1\n",
     f"{F}: sampling.cost_per_unit (-1) must be a number of at least 0"),
    (GOOD + "[sampling]\nseed = 1.5\n", f"{F}: sampling.seed (1.5) must be a whole number from 0 to 2**128 - 1, written without quotes"),
    (GOOD + "[samplng]\n", f"{F}: samplng: unknown key; did you mean 'sampling'?"),
    (GOOD.split("[[characteristic]]")[0], f"{F}: no [[characteristic]] given; at least one is required"),
    (GOOD.replace('class = "major"', 'class = "severe"'),
     f"{F}: characteristic[1].class ('severe') must be one of: critical, major, minor"),
    (GOOD.replace('aql = "1%"', 'aql = "1 percent"'),
     f"{F}: characteristic[1].aql ('1 percent') must be a number such as 0.01, 1% or 250ppm"),
    (GOOD.replace('aql = "1%"', "aql = 1.5"),
     f"{F}: characteristic[1].aql (1.5) must be a fraction nonconforming between 0 and 1, exclusive"),
    (GOOD.replace('aql = "1%"\n', ""), f"{F}: characteristic[1].aql is missing; it is required "
     "(or give only characteristic[1].rql and beta with characteristic[1].c = 0, an "
     "accept-on-zero plan)"),
    (GOOD.replace('rql = "8%"', 'rql = "0.5%"'),
     f"{F}: characteristic[1].rql (0.5%) must be above characteristic[1].aql (1%)"),
    (GOOD + 'alpha = "150%"\n',
     f"{F}: characteristic[1].alpha (150%) must be a probability between 0 and 1, exclusive"),
    (GOOD + "c = -1\n", f"{F}: characteristic[1].c (-1) must be a whole number of at least 0"),
    (GOOD + 'cls = "x"\n', f"{F}: characteristic[1].cls: unknown key; did you mean 'class'?"),
    (GOOD + GOOD.split("[lot]")[1].split("size = 500")[1],
     f"{F}: characteristic[2].id ('M1') is used twice; ids must be unique"),
    (GOOD + 'alpha = "60%"\nbeta = "50%"\n',
     f"{F}: characteristic[1].alpha + beta (0.6 + 0.5) must be below 1"),
    ('characteristic = 3\n[part]\nid = "P"\n',
     f"{F}: characteristic must be an array of tables, written [[characteristic]]"),
    (GOOD.replace("[lot]\nsize = 500", '[lot]\nsize = 500\ncounts = "nonconformities"')
     + '[sampling]\nmodel = "binomial"\n',
     f"{F}: sampling.model (binomial) does not apply to nonconformities per unit; the Poisson "
     "model is exact there"),
]


@pytest.mark.parametrize("text,message", MALFORMED)
def test_malformed_plan_files(text, message):
    with pytest.raises(InputError) as e:
        loads(text, F)
    if message is None:
        assert str(e.value).startswith(f"{F}: not valid TOML")
    else:
        assert str(e.value) == message


def test_good_file_and_fingerprint_ignores_layout():
    a = loads(GOOD, F)
    b = loads("# a comment\n" + GOOD.replace('rql = "8%"', 'rql   =   "8%"'), F)
    assert a.characteristics[0].targets.rql == 0.08 and a.scope.lot_size == 500
    assert a.fingerprint() == b.fingerprint()
    assert loads(GOOD.replace("8%", "9%"), F).fingerprint() != a.fingerprint()


def test_missing_file():
    with pytest.raises(InputError, match="no such plan file"):
        load("nowhere/none.toml")


def test_shipped_plan_files_are_valid():
    from pathlib import Path

    for f in sorted((Path(__file__).parents[1] / "plans").glob("*.toml")):
        load(f)
