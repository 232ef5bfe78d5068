"""The engine imports no Jupyter package, so batches and workers run headless."""

import subprocess
import sys

ENGINE_MODULES = [
    "wavebench",
    "wavebench.core.errors",
    "wavebench.core.params",
    "wavebench.core.streams",
    "wavebench.core.frames",
    "wavebench.core.geodesy",
    "wavebench.core.trig",
    "wavebench.sea.spectra",
    "wavebench.sea.spreading",
    "wavebench.sea.dispersion",
    "wavebench.sea.realisation",
    "wavebench.sea.rao",
    "wavebench.sea.wave_motion",
    "wavebench.sea.drift",
    "wavebench.sea.current",
    "wavebench.sea.wind",
    "wavebench.sea.seabed",
    "wavebench.sea.seastate",
    "wavebench.craft.hull",
    "wavebench.craft.actuators",
    "wavebench.craft.catalogue",
    "wavebench.craft.integrate",
    "wavebench.craft.manoeuvres",
    "wavebench.craft.kernel",
    "wavebench.guidance",
    "wavebench.control",
    "wavebench.spec",
    "wavebench.spec.build",
    "wavebench.trial",
    "wavebench.analysis",
    "wavebench.campaign",
    "wavebench.campaign.fingerprint",
    "wavebench.campaign.series",
    "wavebench.campaign.replay",
    "wavebench.notebook_verify",
    "wavebench.sensors",
    "wavebench.navigation",
    "wavebench.report",
    "wavebench.demo",
    "wavebench.cli",
]
FORBIDDEN = ("IPython", "ipykernel", "ipywidgets", "jupyter", "jupyterlab", "bqplot", "notebook", "traitlets")


def test_engine_imports_no_jupyter_package() -> None:
    code = (
        "import importlib, sys\n"
        f"for m in {ENGINE_MODULES!r}: importlib.import_module(m)\n"
        f"bad = sorted(m for m in sys.modules if m.split('.')[0] in {FORBIDDEN!r})\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "", f"engine pulled in: {out.stdout.strip()}"
