"""Campaigns: executors and the on-disk store."""

from .executor import CampaignResult, evaluate_verdicts, run_campaign, with_overrides
from .store import STORE_FORMAT, STORE_FORMAT_VERSION, export_netcdf, package_versions, read_store, write_store

__all__ = [
    "STORE_FORMAT",
    "STORE_FORMAT_VERSION",
    "CampaignResult",
    "evaluate_verdicts",
    "export_netcdf",
    "package_versions",
    "read_store",
    "run_campaign",
    "with_overrides",
    "write_store",
]
