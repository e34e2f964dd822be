"""Saved fits validated on load: a seeded mutation fuzz of valid files, through the API and the CLI.

Every damaged file must end in our error family (InputFileError) with one line naming the
file and the key, or (for a harmless edit, e.g. a deleted note) load as a valid result;
never a traceback.  The bounds come from the model declarations (rheofit/models).
"""

import copy
import json
import math
import random
from pathlib import Path

import pytest
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.errors import InputFileError, RheofitError
from rheofit.fitting.result import FitResult
from rheofit.fitting.saved import load_fit

SAMPLES = Path(__file__).resolve().parent.parent / "rheofit" / "sample_data"
FLOW = ["--diameter", "1 mm", "--length", "10 cm", "--flow-rate", "1 uL/min"]
runner = CliRunner()


@pytest.fixture(scope="module")
def valid(tmp_path_factory):
    """A valid saved Carreau fit of the invented sample lot A, as a dict."""
    out = tmp_path_factory.mktemp("saved") / "carreau.json"
    result = runner.invoke(app, ["fit", str(SAMPLES / "medium_lot_A.csv"), "--model", "carreau",
                                 "--out", str(out)])
    assert result.exit_code == 0, result.output
    return json.loads(out.read_text(encoding="utf-8"))


def _fit(doc):
    return doc["curves"][0]["fits"][0]


# --- the mutations: each takes (doc, rng) and damages doc in place ---------------

def _paths(value, here=()):
    """Every (path) to a value inside nested dicts and lists."""
    yield here
    if isinstance(value, dict):
        for k, v in value.items():
            yield from _paths(v, here + (k,))
    elif isinstance(value, list):
        for i, v in enumerate(value):
            yield from _paths(v, here + (i,))


def _pick(doc, rng):
    paths = [p for p in _paths(doc) if p]
    path = rng.choice(paths)
    parent = doc
    for step in path[:-1]:
        parent = parent[step]
    return parent, path[-1]


def delete_key(doc, rng):
    parent, key = _pick(doc, rng)
    del parent[key]


def change_type(doc, rng):
    parent, key = _pick(doc, rng)
    parent[key] = rng.choice(["x", 1, 2.5, True, None, [], {}, [1, "a"], {"a": 1}])


def nest_deeply(doc, rng):
    parent, key = _pick(doc, rng)
    parent[key] = f"DEEP-{rng.choice([30, 200, 5000])}"  # spelled out in _write


def _deep(depth: int) -> str:
    """``depth`` nested lists and tables as JSON text (too deep for json.dumps to write)."""
    opening = "".join("[" if i % 2 else '{"a": ' for i in range(depth))
    closing = "".join("]" if i % 2 else "}" for i in reversed(range(depth)))
    return opening + "0" + closing


def out_of_bounds(doc, rng):
    param = _fit(doc)["params"][rng.choice(["eta0", "eta_inf", "lam", "n"])]
    param["value"] = rng.choice([50.0, -1.0, 1e300, 0.0, -1e-9])


def non_finite(doc, rng):
    parent, key = _pick(doc, rng)
    parent[key] = rng.choice([math.nan, math.inf, -math.inf])


def covariance_size(doc, rng):
    matrix = _fit(doc)["covariance"]["matrix"]
    if rng.random() < 0.5:
        matrix.pop()
    else:
        for row in matrix:
            row.append(0.0)


def covariance_asymmetric(doc, rng):
    matrix = _fit(doc)["covariance"]["matrix"]
    matrix[0][1] = matrix[0][1] + 10 * abs(matrix[0][0]) + 1.0


def covariance_negative(doc, rng):
    matrix = _fit(doc)["covariance"]["matrix"]
    i = rng.randrange(len(matrix))
    matrix[i][i] = -abs(matrix[i][i]) - 1.0


def wrong_version(doc, rng):
    doc["version"] = rng.choice([0, 2, "1", 1.5, None, True])


MUTATIONS = [delete_key, change_type, nest_deeply, out_of_bounds, non_finite, covariance_size,
             covariance_asymmetric, covariance_negative, wrong_version]
#: mutations that always damage the file (the others may hit a key that is optional)
ALWAYS_BAD = {out_of_bounds, covariance_size, covariance_asymmetric, covariance_negative,
              wrong_version}
CASES = [(m, seed) for m in MUTATIONS for seed in range(12)]


def _write(tmp_path, doc, name="fit.json") -> Path:
    path = tmp_path / name
    text = json.dumps(doc)  # nan/inf written as NaN/Infinity on purpose
    for depth in (30, 200, 5000):
        text = text.replace(f'"DEEP-{depth}"', _deep(depth))
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize("mutation, seed", CASES, ids=[f"{m.__name__}-{s}" for m, s in CASES])
def test_mutated_saved_fit_through_api_and_cli(valid, tmp_path, mutation, seed):
    doc = copy.deepcopy(valid)
    mutation(doc, random.Random(seed))
    path = _write(tmp_path, doc)
    before = path.read_bytes()
    try:
        loaded = load_fit(path)
    except RheofitError as exc:
        message = str(exc)
        assert isinstance(exc, InputFileError) or "fit.json" in message, message
        assert "fit.json" in message and "\n" not in message, message
        failed = True
    else:
        assert mutation not in ALWAYS_BAD, "a damaged file was accepted"
        assert isinstance(loaded, FitResult)
        failed = False
    result = runner.invoke(app, ["flow", str(path), *FLOW])
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    if failed:
        assert result.exit_code == 2
        lines = [line for line in result.output.splitlines() if line.strip()]
        assert len(lines) == 1 and "fit.json" in lines[0], result.output
    else:
        assert result.exit_code in (0, 2), result.output
    assert path.read_bytes() == before


def test_carreau_n_far_outside_its_bounds_is_refused(valid, tmp_path):
    """n = 50 once printed 6.5e35 MPa beside a '95 % interval' of 2.2 kPa."""
    doc = copy.deepcopy(valid)
    _fit(doc)["params"]["n"]["value"] = 50
    path = _write(tmp_path, doc, "n50.json")
    with pytest.raises(InputFileError, match=r"n50\.json.*fits\[0\]\.params\.n"):
        load_fit(path)
    result = runner.invoke(app, ["flow", str(path), *FLOW])
    assert result.exit_code == 2 and "MPa" not in result.output
    assert "params.n" in result.output


def test_unmodified_saved_fit_loads(valid, tmp_path):
    path = _write(tmp_path, valid)
    assert isinstance(load_fit(path), FitResult)
    assert runner.invoke(app, ["flow", str(path), *FLOW]).exit_code == 0


@pytest.mark.parametrize("name", ["broken.json", "broken.txt"])
def test_broken_json_is_reported_as_json_with_line_and_column(tmp_path, name):
    path = tmp_path / name
    path.write_text('{"kind": "rheofit-fits",\n "version": 1,,\n}', encoding="utf-8")
    with pytest.raises(InputFileError, match=r"broken JSON at line 2, column 15"):
        load_fit(path)
    result = runner.invoke(app, ["flow", str(path), *FLOW])
    assert result.exit_code == 2
    assert "broken JSON at line 2, column 15" in result.output and name in result.output
