"""pyproject.toml and environment.yml must declare the same dependencies.

Every runtime dependency and every ``test`` / ``ui`` extra of pyproject.toml
must appear in environment.yml's conda-forge list under its conda name, with
the same version bounds, and environment.yml may add only ``python``, ``pip``
and the package itself installed through pip. environment.yml is read with a
small line parser (PyYAML is not a dependency); it understands the plain
layout conda uses: ``channels:`` and ``dependencies:`` lists with an optional
nested ``- pip:`` list.
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

import pytest
from packaging.requirements import Requirement
from packaging.utils import canonicalize_name

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10: pytest itself depends on tomli there
    import tomli as tomllib

ROOT = Path(__file__).resolve().parents[1]
PYPROJECT = ROOT / "pyproject.toml"
ENVIRONMENT = ROOT / "environment.yml"

#: Extras that environment.yml must mirror.
MIRRORED_EXTRAS = ("test", "ui")
#: Entries environment.yml may have beyond pyproject's dependencies.
CONDA_ONLY = {"python", "pip"}
#: PyPI name -> conda-forge name where the two differ (canonicalised names).
#: None of the current dependencies is renamed; add a row when one is.
PYPI_TO_CONDA: dict[str, str] = {}


# --- parsing -----------------------------------------------------------------


def conda_name(pypi_name: str) -> str:
    name = canonicalize_name(pypi_name)
    return PYPI_TO_CONDA.get(name, name)


def parse_environment(text: str) -> tuple[list[str], dict[str, str], list[str]]:
    """Channels, conda dependencies (name -> version spec) and pip entries."""
    channels: list[str] = []
    conda: dict[str, str] = {}
    pip: list[str] = []
    section = None
    pip_indent: int | None = None
    for raw in text.splitlines():
        line = re.sub(r"\s+#.*$|^\s*#.*$", "", raw).rstrip()
        if not line.strip():
            continue
        indent = len(line) - len(line.lstrip())
        stripped = line.strip()
        if indent == 0 and not stripped.startswith("-"):
            section = stripped.split(":", 1)[0].strip()
            pip_indent = None
            continue
        item_match = re.match(r"-\s+(.*)$", stripped)
        if item_match is None:
            raise ValueError(f"environment.yml: cannot read line {raw!r}")
        item = item_match.group(1).strip().strip("'\"")
        if section == "channels":
            channels.append(item)
        elif section == "dependencies":
            if pip_indent is not None and indent > pip_indent:
                pip.append(item)
                continue
            pip_indent = None
            if item.rstrip() == "pip:":
                pip_indent = indent
                continue
            item = item.split("::", 1)[-1]  # drop a "channel::" prefix
            spec = re.match(r"([A-Za-z0-9][A-Za-z0-9._-]*)\s*(.*)$", item)
            if spec is None:
                raise ValueError(f"environment.yml: cannot read dependency {item!r}")
            conda[canonicalize_name(spec.group(1))] = spec.group(2).replace(" ", "")
    return channels, conda, pip


def pyproject_requirements() -> tuple[str, dict[str, str], dict[str, dict[str, str]]]:
    """Project name, runtime requirements and extras (name -> specifier string)."""
    data = tomllib.loads(PYPROJECT.read_text(encoding="utf-8"))
    project = data["project"]
    name = canonicalize_name(project["name"])

    def table(reqs: list[str]) -> dict[str, str]:
        out = {}
        for r in reqs:
            req = Requirement(r)
            if canonicalize_name(req.name) == name:
                continue  # self-reference such as "wavebench[test,ui]"
            out[conda_name(req.name)] = str(req.specifier)
        return out

    runtime = table(project.get("dependencies", []))
    extras = {k: table(v) for k, v in project.get("optional-dependencies", {}).items()}
    return name, runtime, extras


def mirrored_requirements() -> dict[str, str]:
    _, runtime, extras = pyproject_requirements()
    required = dict(runtime)
    for extra in MIRRORED_EXTRAS:
        required.update(extras.get(extra, {}))
    return required


def normalise_spec(spec: str) -> str:
    """Comma-separated clauses, sorted, without spaces (PEP 440 and conda agree here)."""
    return ",".join(sorted(c for c in spec.replace(" ", "").split(",") if c))


# --- the parser itself ---------------------------------------------------------


def test_parser_reads_the_conda_layout():
    text = """\
# comment
name: demo
channels:
  - conda-forge  # trailing comment
dependencies:
  - python>=3.10
  - conda-forge::numpy >=1.26
  - "scipy>=1.11"
  - pip
  - pip:
      - -e .[test]
  - tqdm
"""
    channels, conda, pip = parse_environment(text)
    assert channels == ["conda-forge"]
    assert conda == {
        "python": ">=3.10",
        "numpy": ">=1.26",
        "scipy": ">=1.11",
        "pip": "",
        "tqdm": "",
    }
    assert pip == ["-e .[test]"]


# --- the agreement -------------------------------------------------------------


@pytest.fixture(scope="module")
def environment() -> tuple[list[str], dict[str, str], list[str]]:
    assert ENVIRONMENT.exists(), f"{ENVIRONMENT} is missing"
    return parse_environment(ENVIRONMENT.read_text(encoding="utf-8"))


def test_pyproject_declares_the_mirrored_extras():
    _, runtime, extras = pyproject_requirements()
    assert runtime, "pyproject.toml has no runtime dependencies"
    for extra in MIRRORED_EXTRAS:
        assert extras.get(extra), f"pyproject.toml has no [{extra}] extra"


def test_environment_uses_conda_forge(environment):
    channels, _, _ = environment
    assert "conda-forge" in channels


def test_every_pyproject_dependency_is_in_environment(environment):
    _, conda, _ = environment
    missing = sorted(set(mirrored_requirements()) - set(conda))
    assert not missing, f"in pyproject.toml but not in environment.yml: {missing}"


def test_environment_adds_nothing_beyond_pyproject(environment):
    _, conda, _ = environment
    extra = sorted(set(conda) - set(mirrored_requirements()) - CONDA_ONLY)
    assert not extra, f"in environment.yml but not in pyproject.toml (runtime/test/ui): {extra}"


def test_version_bounds_agree(environment):
    _, conda, _ = environment
    required = mirrored_requirements()
    differ = {
        name: (spec, conda[name])
        for name, spec in required.items()
        if name in conda and normalise_spec(spec) != normalise_spec(conda[name])
    }
    assert not differ, f"version bounds differ (pyproject, environment.yml): {differ}"


def test_python_bound_agrees(environment):
    _, conda, _ = environment
    requires = tomllib.loads(PYPROJECT.read_text(encoding="utf-8"))["project"]["requires-python"]
    # environment.yml may leave python unpinned; a pin must equal requires-python
    spec = conda.get("python", "")
    assert spec == "" or normalise_spec(spec) == normalise_spec(requires), (spec, requires)


def test_pip_installs_only_the_package_itself(environment):
    _, _, pip = environment
    name, _, _ = pyproject_requirements()
    for entry in pip:
        target = re.sub(r"^(-e|--editable)\s+", "", entry).strip()
        local = re.fullmatch(r"\.(\[[A-Za-z0-9_,\-\s]*\])?", target) is not None
        by_name = re.match(r"[A-Za-z0-9._-]+", target)
        assert local or (by_name is not None and canonicalize_name(by_name.group(0)) == name), (
            f"environment.yml pip entry {entry!r} is not the package itself; "
            "put dependencies in the conda-forge list"
        )
