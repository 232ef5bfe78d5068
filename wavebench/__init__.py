"""wavebench: a bench for marine guidance, navigation and control.

The engine (everything under ``wavebench`` except ``wavebench.ui``) imports no
Jupyter package, so scripted batches and distributed workers run headless.
"""

__version__ = "0.1.0.dev0"
