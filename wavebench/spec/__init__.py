"""The spec layer: versioned TOML specs with distributions, round trip and content hash."""

from .build import TrialCurrent, TrialEnvironment, TrialWind, build_environment
from .distributions import Choice, LogNormal, Normal, TruncatedNormal, Uniform, parse_distribution
from .draws import draw_trial_parameters
from .io import dump_spec, example_spec_names, example_spec_path, load_spec, save_spec, spec_hash
from .schema import (
    SPEC_VERSION,
    CampaignSpec,
    CraftSpec,
    CurrentSpec,
    CurrentVariationSpec,
    ScenarioSpec,
    SeaSpec,
    Spec,
    SpreadingSpec,
    WindSpec,
    distributed_fields,
    spec_from_data,
    spec_to_data,
)

__all__ = [
    "SPEC_VERSION",
    "CampaignSpec",
    "Choice",
    "CraftSpec",
    "CurrentSpec",
    "CurrentVariationSpec",
    "LogNormal",
    "Normal",
    "ScenarioSpec",
    "SeaSpec",
    "Spec",
    "SpreadingSpec",
    "TrialCurrent",
    "TrialEnvironment",
    "TrialWind",
    "TruncatedNormal",
    "Uniform",
    "WindSpec",
    "build_environment",
    "distributed_fields",
    "draw_trial_parameters",
    "dump_spec",
    "example_spec_names",
    "example_spec_path",
    "load_spec",
    "parse_distribution",
    "save_spec",
    "spec_from_data",
    "spec_hash",
    "spec_to_data",
]
