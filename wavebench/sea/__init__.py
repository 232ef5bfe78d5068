"""Sea and environment: spectra, spreading, dispersion, realisations, current, wind, seabed."""
