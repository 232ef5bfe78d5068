"""Sea and environment: spectra, spreading, dispersion, realisations, RAOs, drift,
current, wind, seabed and sea-state codes."""

from .current import CurrentModel, current_velocity_ned, init_current
from .dispersion import encounter_frequency, group_speed, phase_speed, wavelength, wavenumber
from .drift import DriftModel, drift_force
from .rao import RaoTable, closed_form_rao, read_rao_csv, read_rao_netcdf
from .realisation import WaveComponents, realise_sea
from .seabed import SeabedGrid, depth_under_keel, grounded, load_seabed, synthetic_bay
from .seastate import sea_state_band, sea_state_code
from .spectra import SeaSpectrum, dnv_gamma, jonswap, pierson_moskowitz, spectral_summary
from .spreading import DirectionalSpreading
from .wave_motion import significant_amplitude, wave_frequency_kinematics, wave_frequency_motion
from .wind import WindageParams, WindParams, init_wind, wind_loads_on_craft

__all__ = [
    "CurrentModel",
    "DirectionalSpreading",
    "DriftModel",
    "RaoTable",
    "SeaSpectrum",
    "SeabedGrid",
    "WaveComponents",
    "WindParams",
    "WindageParams",
    "closed_form_rao",
    "current_velocity_ned",
    "depth_under_keel",
    "dnv_gamma",
    "drift_force",
    "encounter_frequency",
    "grounded",
    "group_speed",
    "init_current",
    "init_wind",
    "jonswap",
    "load_seabed",
    "phase_speed",
    "pierson_moskowitz",
    "read_rao_csv",
    "read_rao_netcdf",
    "realise_sea",
    "sea_state_band",
    "sea_state_code",
    "significant_amplitude",
    "spectral_summary",
    "synthetic_bay",
    "wave_frequency_kinematics",
    "wave_frequency_motion",
    "wavelength",
    "wavenumber",
    "wind_loads_on_craft",
]
