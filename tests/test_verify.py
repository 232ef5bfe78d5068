"""Result fingerprints and 'wavebench verify NOTEBOOK'.

The hash is SHA-256 (NIST FIPS 180-4, checked against Python's hashlib) over
bytes whose floats are IEEE 754 binary64 little-endian (checked against
Python's struct module, whose '<d' format is that encoding). The verify
command re-executes a notebook with nbclient and a real ipykernel.
"""

from __future__ import annotations

import hashlib
import json
import struct
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from wavebench.campaign import run_campaign
from wavebench.campaign.fingerprint import canonical_chunks, part_hashes, result_card, result_hash
from wavebench.cli import main
from wavebench.spec import example_spec_path, load_spec

# jupyter_client and nbclient may warn about their own deprecated calls; filter those by message only.
JUPYTER_WARNINGS = [
    pytest.mark.filterwarnings("ignore:.*datetime.datetime.utcnow.*:DeprecationWarning"),
    pytest.mark.filterwarnings("ignore:Jupyter is migrating its paths to use standard platformdirs:DeprecationWarning"),
    pytest.mark.filterwarnings("ignore:There is no current event loop:DeprecationWarning"),
]


def _table() -> pd.DataFrame:
    return pd.DataFrame({"trial": np.arange(4, dtype=np.int64), "xte_p95_m": [1.5, np.nan, 2.25, -0.5],
                         "ended": ["completed", "failed", "completed", "truncated"],
                         "failed": [False, True, False, False]})  # fmt: skip


def test_the_hash_is_sha256_of_the_canonical_bytes_with_binary64_floats() -> None:
    t = _table()
    data = b"".join(canonical_chunks(t, []))
    # NIST FIPS 180-4 SHA-256, as computed by Python's hashlib
    assert result_hash(t, []) == hashlib.sha256(data).hexdigest()
    # IEEE 754 binary64, little-endian (Python struct '<d'): the float column's values appear in order
    finite = struct.pack("<d", 2.25) + struct.pack("<d", -0.5)
    assert finite in data
    # IEEE 754-2019 sec. 6.2.1: a quiet NaN has the leading significand bit set; every NaN is written as
    # the quiet NaN 0x7FF8000000000000, so a NaN with another payload hashes the same
    assert struct.pack("<Q", 0x7FF8000000000000) in data
    other_nan = struct.unpack("<d", struct.pack("<Q", 0x7FF8000000000123))[0]
    assert np.isnan(other_nan)
    assert result_hash(t.assign(xte_p95_m=[1.5, other_nan, 2.25, -0.5]), []) == result_hash(t, [])


def test_column_order_index_int_width_and_string_dtype_do_not_change_the_hash() -> None:
    t = _table()
    same = t[["failed", "ended", "xte_p95_m", "trial"]].astype({"trial": "int32", "ended": "string"})
    same.index = [10, 11, 12, 13]
    assert result_hash(same, []) == result_hash(t, [])


def test_any_changed_value_changes_the_hash() -> None:
    t = _table()
    h = result_hash(t, [])
    bumped = t.copy()
    bumped.loc[0, "xte_p95_m"] = np.nextafter(1.5, 2.0)  # IEEE 754 nextUp: the next double, one ulp away
    assert result_hash(bumped, []) != h
    assert result_hash(t.assign(failed=[False, False, False, False]), []) != h
    assert result_hash(t.assign(ended=["completed", "failed", "completed", "completed"]), []) != h
    assert result_hash(t.iloc[::-1], []) != h  # the row order is part of the result
    assert result_hash(t.rename(columns={"xte_p95_m": "xte_max_m"}), []) != h


@pytest.fixture(scope="module")
def spec():
    return load_spec(example_spec_path("skerrow_sound"), ["scenario.duration_s=30.0"])


@pytest.fixture(scope="module")
def inline(spec):
    return run_campaign(spec, trials=6, batch_size=6, progress=False)


def test_the_same_bits_give_the_same_hash_across_batch_sizes_and_executors(spec, inline) -> None:
    card = result_card(inline)
    assert card.trials == 6 and len(card.result_hash) == 64
    other = run_campaign(spec, trials=6, batch_size=4, progress=False, executor="processes", workers=2)
    # the executors' own guarantee, checked value by value, before comparing hashes
    pd.testing.assert_frame_equal(other.metrics, inline.metrics)
    assert result_card(other).result_hash == card.result_hash
    assert result_hash(other.metrics, other.verdicts, other.timeseries) == card.result_hash


def test_a_changed_metric_or_verdict_or_time_series_changes_the_hash(inline) -> None:
    h = result_hash(inline.metrics, inline.verdicts, inline.timeseries)
    m = inline.metrics.copy()
    m.loc[2, "xte_p95_m"] = np.nextafter(m.loc[2, "xte_p95_m"], np.inf)
    assert result_hash(m, inline.verdicts, inline.timeseries) != h
    v = [dict(inline.verdicts[0].to_dict(), n_met=inline.verdicts[0].n_met - 1 if inline.verdicts[0].n_met else 1)]
    assert result_hash(inline.metrics, v + inline.verdicts[1:], inline.timeseries) != h
    ts = inline.timeseries.copy(deep=True)
    x = ts["xte_m"].values[0, 3]  # float32: the next value up in its own precision
    ts["xte_m"][0, 3] = np.nextafter(x, np.array(np.inf, dtype=x.dtype))
    assert result_hash(inline.metrics, inline.verdicts, ts) != h
    # the part hashes say which part changed
    before, after = (
        part_hashes(inline.metrics, inline.verdicts, inline.timeseries),
        part_hashes(inline.metrics, inline.verdicts, ts),
    )
    assert before["metrics_verdicts"] == after["metrics_verdicts"] == result_hash(inline.metrics, inline.verdicts)
    assert before["timeseries"] != after["timeseries"]
    # verdicts given as Verdict objects or as their verdicts.json dicts hash alike
    assert result_hash(inline.metrics, [x.to_dict() for x in inline.verdicts], inline.timeseries) == h


def test_the_card_shows_the_verdicts_and_carries_the_hashes(inline) -> None:
    card = result_card(inline)
    data, meta = card._repr_mimebundle_()
    assert set(data) == {"text/html", "text/plain"}
    wb = meta["wavebench"]
    assert wb["result_hash"] == card.result_hash and wb["trials"] == 6
    assert wb["verdicts"] == {v.name: v.verdict for v in inline.verdicts}
    from wavebench.notebook_verify import html_verdicts

    assert html_verdicts(data["text/html"]) == wb["verdicts"]
    assert "<script" not in data["text/html"]


# ---------------------------------------------------------------------------
# wavebench verify
# ---------------------------------------------------------------------------

RESULT = (
    "spec = load_spec(example_spec_path('skerrow_sound'), ['scenario.duration_s=30.0'])\n"
    "result_card(run_campaign(spec, trials={n}, progress=False))"
)
CELLS = [
    "import sys\nprint(sys.executable)\n"
    "from wavebench.campaign import run_campaign\n"
    "from wavebench.campaign.fingerprint import result_card\n"
    "from wavebench.spec import example_spec_path, load_spec",
    RESULT.format(n=4),
    RESULT.format(n=3),
]


def _executed_notebook(folder: Path, cells: list[str]) -> Path:
    import nbformat
    from nbclient import NotebookClient

    nb = nbformat.v4.new_notebook()
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3", "language": "python"}
    nb.cells = [nbformat.v4.new_code_cell(c) for c in cells]
    NotebookClient(nb, timeout=300, kernel_name="python3", resources={"metadata": {"path": str(folder)}}).execute()
    path = folder / "small.ipynb"
    nbformat.write(nb, path)
    return path


@pytest.fixture(scope="module")
def executed(tmp_path_factory) -> Path:
    return _executed_notebook(tmp_path_factory.mktemp("nb"), CELLS)


def _with(marks):
    def wrap(fn):
        for m in marks:
            fn = m(fn)
        return fn

    return wrap


@_with(JUPYTER_WARNINGS)
def test_verify_passes_on_an_executed_notebook_run_by_this_python(executed, capsys) -> None:
    nb = json.loads(executed.read_text(encoding="utf-8"))
    # the kernel is the ipykernel of the Python running the tests (the venv's own)
    assert "".join(nb["cells"][0]["outputs"][0]["text"]).strip() == sys.executable
    assert main(["verify", str(executed), "--timeout", "300"]) == 0
    out = capsys.readouterr().out
    assert "cell 1: same" in out and "cell 2: same" in out
    assert "verified: all 2 saved results reproduce bit for bit" in out


@_with(JUPYTER_WARNINGS)
def test_verify_fails_naming_the_cell_whose_saved_hash_or_visible_table_was_edited(executed, tmp_path,
                                                                                    capsys) -> None:  # fmt: skip
    nb = json.loads(executed.read_text(encoding="utf-8"))
    # cell 1: one hex digit of the saved result hash changed in the output's metadata
    meta = nb["cells"][1]["outputs"][-1]["metadata"]["wavebench"]
    meta["result_hash"] = ("0" if meta["result_hash"][0] != "0" else "1") + meta["result_hash"][1:]
    meta["parts"]["timeseries"] = ("0" if meta["parts"]["timeseries"][0] != "0" else "1") + meta["parts"]["timeseries"][
        1:
    ]
    # cell 2: the verdict word shown in the HTML table changed, the metadata left alone
    out2 = nb["cells"][2]["outputs"][-1]
    html = "".join(out2["data"]["text/html"])
    word = out2["metadata"]["wavebench"]["verdicts"]["track_keeping"]
    fake = "pass" if word != "pass" else "fail"
    at = html.index(f">{word}</span>", html.index("data-requirement='track_keeping'"))
    out2["data"]["text/html"] = html[:at] + f">{fake}</span>" + html[at + len(word) + len("></span>") :]
    path = tmp_path / "tampered.ipynb"
    path.write_text(json.dumps(nb), encoding="utf-8")
    assert main(["verify", str(path), "--timeout", "300"]) == 1
    out = capsys.readouterr().out
    assert "cell 1: DIFFERS — result hash saved" in out
    assert "the parts that differ: timeseries (the same: metrics_verdicts)" in out
    assert "cell 2: DIFFERS — the visible HTML table shows" in out and "its own metadata says" in out
    assert "NOT verified: 0 of 2 saved results reproduce" in out


def test_verify_fails_when_the_notebook_holds_no_result(tmp_path, capsys) -> None:
    import nbformat

    nb = nbformat.v4.new_notebook()
    nb.cells = [nbformat.v4.new_code_cell("1 + 1")]
    path = tmp_path / "empty.ipynb"
    nbformat.write(nb, path)
    assert main(["verify", str(path)]) == 1
    assert "no saved wavebench result" in capsys.readouterr().out
    assert main(["verify", str(tmp_path / "absent.ipynb")]) == 1
    assert "no such notebook" in capsys.readouterr().out


def _saved_with_a_fake_result(tmp_path: Path, source: str) -> Path:
    """A notebook whose one cell holds a saved result card output, and whose source is ``source``."""
    import nbformat

    nb = nbformat.v4.new_notebook()
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3", "language": "python"}
    cell = nbformat.v4.new_code_cell(source)
    html = "<table><tr data-requirement='r'><td><span class='verdict'>pass</span></td></tr></table>"
    cell.outputs = [nbformat.v4.new_output("display_data", data={"text/html": html, "text/plain": "card"},
                                           metadata={"wavebench": {"spec_hash": "a" * 64, "result_hash": "b" * 64,
                                                                   "trials": 3, "verdicts": {"r": "pass"}}})]  # fmt: skip
    nb.cells = [cell]
    path = tmp_path / "fake.ipynb"
    nbformat.write(nb, path)
    return path


@_with(JUPYTER_WARNINGS)
def test_verify_fails_when_a_saved_result_is_not_produced_again(tmp_path, capsys) -> None:
    assert main(["verify", str(_saved_with_a_fake_result(tmp_path, "1 + 1"))]) == 1
    out = capsys.readouterr().out
    assert "cell 0: missing — the re-run produced no result in this cell" in out and "NOT verified" in out


@_with(JUPYTER_WARNINGS)
def test_verify_fails_naming_the_cell_when_the_re_run_raises(tmp_path, capsys) -> None:
    assert main(["verify", str(_saved_with_a_fake_result(tmp_path, "raise RuntimeError('no such spec file')"))]) == 1
    out = capsys.readouterr().out
    assert "re-execution failed in cell 0" in out and "RuntimeError: no such spec file" in out
