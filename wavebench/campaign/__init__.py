"""Campaigns: executors and the on-disk store."""

from .executor import CampaignResult, evaluate_verdicts, run_campaign, with_overrides
from .fingerprint import ResultCard, part_hashes, result_card, result_hash
from .replay import TrialReplay, replay_trial
from .store import STORE_FORMAT, STORE_FORMAT_VERSION, export_netcdf, package_versions, read_store, write_store

__all__ = [
    "STORE_FORMAT",
    "STORE_FORMAT_VERSION",
    "CampaignResult",
    "ResultCard",
    "TrialReplay",
    "evaluate_verdicts",
    "export_netcdf",
    "package_versions",
    "part_hashes",
    "read_store",
    "replay_trial",
    "result_card",
    "result_hash",
    "run_campaign",
    "with_overrides",
    "write_store",
]
