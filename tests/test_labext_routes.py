"""The wavebench Jupyter server extension, through a real Jupyter server in a subprocess.

One server per module, started the way an installed package starts it: the
repository's ``jupyter-config/jupyter_server_config.d/wavebench.json`` copied
into a fresh ``JUPYTER_CONFIG_DIR`` enables ``wavebench.labext``. The stores
are made on disk: a real campaign run with the CLI, a campaign interrupted
part way (plan and chunk file names), one still running, a corrupt manifest,
a manifest of another format, and stores and secrets outside the root reached
through ``..``, percent-encoding and symbolic links.

Checks against things outside the project: the HTTP status codes of RFC 9110
(200 OK, 403 Forbidden, 404 Not Found) and Jupyter Server's documented API
behaviour (an API request without a token is refused with 403, its error
bodies are JSON ``{"message": ...}``); the store files are read back with
:mod:`json` and :mod:`pyarrow.parquet` (reference readers), never with the
extension's own code.
"""

from __future__ import annotations

import json
import os
import shutil
import time
from pathlib import Path

import pytest
from jupyter_test_server import api_request, isolated_env, running_server

pytest.importorskip("jupyter_server")
pq = pytest.importorskip("pyarrow.parquet")

REPO = Path(__file__).resolve().parents[1]
CONFIG_FILE = REPO / "jupyter-config" / "jupyter_server_config.d" / "wavebench.json"
TOKEN = "wavebench-test-token-4f1c"
SENTINEL = "SENTINEL-outside-the-root-7d2e9a"
OLD = time.time() - 3600.0  # an hour ago: well past the 120 s "running" window


def _make_stores(root: Path, outside: Path) -> None:
    from wavebench.cli import main

    # a real finished store, through the CLI
    rc = main(["run", "skerrow_sound", "--out", str(root / "runs" / "a"), "--trials", "4",
               "--set", "scenario.duration_s=20.0", "--quiet"])  # fmt: skip
    assert rc in (0, None, 1)  # 1: verdicts may fail; the store is written either way
    assert (root / "runs" / "a" / "manifest.json").is_file()
    spec = (root / "runs" / "a" / "spec.toml").read_text(encoding="utf-8")

    # interrupted: plan for 10 trials, chunks 0-3 and 4-5 finished, an hour ago
    b = root / "runs" / "b"
    (b / "chunks").mkdir(parents=True)
    (b / "spec.toml").write_text(spec, encoding="utf-8")
    plan = {"spec_hash": "0" * 64, "seed": 7, "trials": 10, "batch_size": 4, "record": False, "until": None,
            "series_attrs": {"spec_hash": "0" * 64, "scenario": "Invented interrupted leg", "decimation_s": 1.0}}  # fmt: skip
    (b / "chunks" / "plan.json").write_text(json.dumps(plan), encoding="utf-8")
    for name in ("metrics-000000000-000000003.parquet", "metrics-000000004-000000005.parquet",
                 "metrics-000000006-000000009.parquet.tmp"):  # fmt: skip
        (b / "chunks" / name).write_bytes(b"")
    for p in [*(b / "chunks").iterdir(), b / "chunks", b / "spec.toml"]:
        os.utime(p, (OLD, OLD))

    # running: the same plan, one chunk written just now
    c = root / "deep" / "c"
    (c / "chunks").mkdir(parents=True)
    (c / "chunks" / "plan.json").write_text(json.dumps({**plan, "trials": 8}), encoding="utf-8")
    (c / "chunks" / "metrics-000000000-000000002.parquet").write_bytes(b"")

    # corrupt manifest, and a manifest of another format
    (root / "broken" / "bad_json").mkdir(parents=True)
    (root / "broken" / "bad_json" / "manifest.json").write_text('{"format": "wavebench-store", ', encoding="utf-8")
    (root / "broken" / "other_format").mkdir(parents=True)
    (root / "broken" / "other_format" / "manifest.json").write_text(json.dumps({"format": "something-else"}),
                                                                    encoding="utf-8")  # fmt: skip

    # a campaign whose plan is cut short
    (root / "broken" / "bad_plan" / "chunks").mkdir(parents=True)
    (root / "broken" / "bad_plan" / "chunks" / "plan.json").write_text('{"trials": 1', encoding="utf-8")

    # too deep (level 4) and hidden: never listed
    (root / "l1" / "l2" / "l3" / "l4").mkdir(parents=True)
    shutil.copy(root / "runs" / "a" / "manifest.json", root / "l1" / "l2" / "l3" / "l4" / "manifest.json")
    (root / ".hidden" / "s").mkdir(parents=True)
    shutil.copy(root / "runs" / "a" / "manifest.json", root / ".hidden" / "s" / "manifest.json")

    # outside the root: a sentinel secret and a store whose spec holds it
    outside.mkdir()
    (outside / "secret.txt").write_text(SENTINEL, encoding="utf-8")
    ext = outside / "ext_store"
    ext.mkdir()
    (ext / "manifest.json").write_text(json.dumps({"format": "wavebench-store", "trials": 1, "note": SENTINEL}),
                                       encoding="utf-8")  # fmt: skip
    (ext / "spec.toml").write_text(f'[scenario]\nname = "{SENTINEL}"\n', encoding="utf-8")
    (ext / "verdicts.json").write_text(json.dumps([{"name": SENTINEL, "verdict": "pass"}]), encoding="utf-8")
    # inside the root, links out: a linked store folder, and a store whose files link out
    (root / "links").mkdir()
    (root / "links" / "to_outside").symlink_to(ext, target_is_directory=True)
    leaky = root / "links" / "leaky"
    leaky.mkdir()
    (leaky / "manifest.json").symlink_to(ext / "manifest.json")
    (leaky / "spec.toml").symlink_to(ext / "spec.toml")
    (leaky / "verdicts.json").symlink_to(ext / "verdicts.json")


class Server:
    """A running Jupyter server: its URL, log file, root folder and the folder outside the root."""

    def __init__(self, base: str, log: Path, root: Path, outside: Path) -> None:
        self.base, self.log, self.root, self.outside = base, log, root, outside

    def get(self, path: str, *, token: str | None = TOKEN) -> tuple[int, str]:
        return api_request(self.base + path, token=token)

    def get_json(self, path: str) -> object:
        status, body = self.get(path)
        assert status == 200, (status, body)
        return json.loads(body)


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory):
    tmp = tmp_path_factory.mktemp("labext")
    root, outside = tmp / "root", tmp / "outside"
    root.mkdir()
    _make_stores(root, outside)
    env = isolated_env(tmp)
    # enabled the way the installed package enables it: the config file in a config folder
    (tmp / "jupyter_config_dir" / "jupyter_server_config.d").mkdir()
    shutil.copy(CONFIG_FILE, tmp / "jupyter_config_dir" / "jupyter_server_config.d" / "wavebench.json")
    with running_server("jupyter_server", tmp=tmp, env=env, root=root, token=TOKEN, base_url="/wb/",
                        start_timeout_s=30.0) as running:  # fmt: skip
        yield Server(running.base, running.log, root, outside)


@pytest.fixture
def srv(server: Server, request: pytest.FixtureRequest):
    """The shared server; its log is printed (shown with the failure) when the test fails."""
    failed_before = request.session.testsfailed
    yield server
    if request.session.testsfailed > failed_before:
        print(f"--- jupyter server log ({server.log}) ---\n{server.log.read_text(errors='replace')}")


def _by_path(listing: object) -> dict[str, dict]:
    assert isinstance(listing, dict)
    return {s["path"]: s for s in listing["stores"]}


def test_listing_describes_each_store(srv: Server) -> None:
    stores = _by_path(srv.get_json("wavebench/stores"))
    root: Path = srv.root
    assert set(stores) == {"runs/a", "runs/b", "deep/c", "broken/bad_json", "broken/other_format",
                           "broken/bad_plan", "links/leaky"}  # fmt: skip

    a = stores["runs/a"]
    verdicts = json.loads((root / "runs/a/verdicts.json").read_text(encoding="utf-8"))
    manifest = json.loads((root / "runs/a/manifest.json").read_text(encoding="utf-8"))
    assert a["state"] == "finished"
    assert a["error"] is None
    assert a["trials_done"] == pq.read_metadata(root / "runs/a/metrics.parquet").num_rows == 4
    assert a["trials_planned"] == 4  # --trials 4
    assert a["verdicts"] == {v["name"]: v["verdict"] for v in verdicts}
    assert a["scenario"] == manifest["scenario"]
    assert a["has_report"] is False
    assert a["name"] == "a"
    assert a["modified_utc"].endswith("+00:00")

    b = stores["runs/b"]
    assert (b["state"], b["trials_done"], b["trials_planned"]) == ("interrupted", 4 + 2, 10)  # 0-3 and 4-5; .tmp not
    assert b["error"] is None
    assert b["verdicts"] == {}

    c = stores["deep/c"]
    assert (c["state"], c["trials_done"], c["trials_planned"]) == ("running", 3, 8)


def test_corrupt_stores_are_listed_with_an_error_and_the_server_keeps_answering(srv: Server) -> None:
    stores = _by_path(srv.get_json("wavebench/stores"))
    assert "not valid JSON" in stores["broken/bad_json"]["error"]
    assert "something-else" in stores["broken/other_format"]["error"]
    assert "chunks/plan.json is not valid JSON" in stores["broken/bad_plan"]["error"]
    assert stores["broken/bad_plan"]["trials_planned"] is None
    for path in ("broken/bad_json", "broken/other_format"):
        status, body = srv.get("wavebench/stores/" + path)
        assert status == 200, body
        assert json.loads(body)["error"] == stores[path]["error"]
    assert srv.get("api/status")[0] == 200
    assert srv.get("wavebench/stores")[0] == 200


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0, reason="root reads any file")
def test_unreadable_manifest_is_reported(srv: Server) -> None:
    root: Path = srv.root
    d = root / "locked"
    d.mkdir()
    shutil.copy(root / "runs/a/manifest.json", d / "manifest.json")
    (d / "manifest.json").chmod(0)
    try:
        stores = _by_path(srv.get_json("wavebench/stores"))
        assert "permission denied" in stores["locked"]["error"]
        assert srv.get("api/status")[0] == 200
    finally:
        (d / "manifest.json").chmod(0o644)
        shutil.rmtree(d)


def test_manifests_that_cannot_be_read_as_text_are_reported(srv: Server) -> None:
    """Unreadable without file permissions (so also when the tests run as root): a folder named
    manifest.json, bytes that are not UTF-8, and a FIFO (a read would block the server)."""
    root: Path = srv.root
    made = [root / "odd" / n for n in ("folder", "latin1", "fifo")]
    for d in made:
        d.mkdir(parents=True)
    (made[0] / "manifest.json").mkdir()
    (made[1] / "manifest.json").write_bytes('{"format": "wavebench-store", "scenario": "B\xe6r"}'.encode("latin-1"))
    os.mkfifo(made[2] / "manifest.json")
    try:
        stores = _by_path(srv.get_json("wavebench/stores"))
        assert "not a regular file" in stores["odd/folder"]["error"]
        assert "not UTF-8" in stores["odd/latin1"]["error"]
        assert "not a regular file" in stores["odd/fifo"]["error"]
        for path in ("odd/folder", "odd/latin1", "odd/fifo"):
            status, body = srv.get("wavebench/stores/" + path)
            assert status == 200, body
            assert json.loads(body)["error"] == stores[path]["error"]
        assert srv.get("api/status")[0] == 200
    finally:
        shutil.rmtree(root / "odd")


def test_store_detail(srv: Server) -> None:
    root: Path = srv.root
    a = srv.get_json("wavebench/stores/runs/a")
    assert isinstance(a, dict)
    assert a["manifest"] == json.loads((root / "runs/a/manifest.json").read_text(encoding="utf-8"))
    assert a["spec"] == (root / "runs/a/spec.toml").read_text(encoding="utf-8")
    assert a["trials_done"] == 4 and a["state"] == "finished"
    b = srv.get_json("wavebench/stores/runs/b/")
    assert isinstance(b, dict)
    assert b["plan"] == json.loads((root / "runs/b/chunks/plan.json").read_text(encoding="utf-8"))
    assert b["chunk_files"] == ["metrics-000000000-000000003.parquet", "metrics-000000004-000000005.parquet"]
    status, body = srv.get("wavebench/stores/runs/nothing_here")
    assert status == 404 and "message" in json.loads(body)
    status, body = srv.get("wavebench/stores/runs")  # a folder, but not a store
    assert status == 404


def test_requests_without_the_token_are_refused(srv: Server) -> None:
    # Jupyter Server REST API: requests need the token; API handlers answer 403 without it
    for path in ("wavebench/stores", "wavebench/stores/runs/a"):
        status, body = srv.get(path, token=None)
        assert status == 403
        assert "Skerrow" not in body
        status, _ = srv.get(path, token="not-the-token")
        assert status == 403


@pytest.mark.parametrize(
    "path",
    [
        "wavebench/stores/../../outside/ext_store",
        "wavebench/stores/runs/../../outside/ext_store",
        "wavebench/stores/%2e%2e/outside/ext_store",
        "wavebench/stores/%2E%2E%2Foutside%2Fext_store",
        "wavebench/stores/runs/%2e%2e/%2e%2e/outside/secret.txt",
        "wavebench/stores/%2e%2e%2fsecret.txt",
        "wavebench/stores/..%5coutside%5cext_store",
        "wavebench/stores/%252e%252e/outside/ext_store",
        "wavebench/stores/runs/a%00/../../../outside/secret.txt",
        "wavebench/stores/links/to_outside",
        "wavebench/stores/links/to_outside/",
        "wavebench/stores/links/../links/to_outside",
        "wavebench/stores/.hidden/s",
    ],
)
def test_paths_outside_the_root_are_refused(srv: Server, path: str) -> None:
    status, body = srv.get(path)
    assert status in (403, 404), (status, body)  # RFC 9110 sec. 15.5.4 / 15.5.5
    assert SENTINEL not in body
    if body.startswith("{"):
        assert "message" in json.loads(body)


def test_absolute_paths_are_refused(srv: Server) -> None:
    outside: Path = srv.outside
    for path in (f"wavebench/stores/{outside}/ext_store", f"wavebench/stores/{outside}/secret.txt",
                 "wavebench/stores/%2F" + str(outside / "ext_store").lstrip("/")):  # fmt: skip
        status, body = srv.get(path)
        assert status in (403, 404), (path, status, body)
        assert SENTINEL not in body
    status, body = srv.get("wavebench/stores/%2F" + str(outside / "ext_store").lstrip("/"))
    assert status == 403 and "absolute" in json.loads(body)["message"]


def test_files_linking_out_of_the_root_are_never_read(srv: Server) -> None:
    status, listing = srv.get("wavebench/stores")
    assert status == 200 and SENTINEL not in listing
    leaky = _by_path(json.loads(listing))["links/leaky"]
    assert "outside the server root" in leaky["error"]
    status, body = srv.get("wavebench/stores/links/leaky")
    assert status == 200 and SENTINEL not in body
    detail = json.loads(body)
    assert detail["manifest"] is None and detail["spec"] is None and detail["verdicts"] == {}
    # a linked folder pointing out of the root is neither listed nor served
    assert "links/to_outside" not in _by_path(json.loads(listing))
    status, body = srv.get("wavebench/stores/links/to_outside")
    assert status == 403 and SENTINEL not in body


def test_non_json_numbers_and_special_files_are_reported_not_served(tmp_path: Path) -> None:
    # RFC 8259 sec. 6: NaN and Infinity are not JSON numbers (Python's json module accepts them; the reply must not);
    # a FIFO named like a store file would block a reader forever.
    import json as _json

    from wavebench.labext.stores import describe_store

    nan_store = tmp_path / "nan"
    nan_store.mkdir()
    (nan_store / "manifest.json").write_text('{"format": "wavebench-store", "trials": NaN}', encoding="utf-8")
    got = describe_store(tmp_path, nan_store, detail=True)
    assert "not valid JSON" in got["error"]
    _json.dumps(got, allow_nan=False)  # answerable as strict JSON
    fifo_store = tmp_path / "fifo"
    fifo_store.mkdir()
    os.mkfifo(fifo_store / "manifest.json")
    got = describe_store(tmp_path, fifo_store, detail=True)  # returns at once (a blocking read would hang here)
    assert "not a regular file" in got["error"]
