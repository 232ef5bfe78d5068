"""Physical constants used across wavebench (SI units).

Blocks take these as parameter defaults so that a test or a user can state
which value is in force (several published check values move in the fourth
digit between g = 9.81 and g = 9.80665 m/s^2).
"""

from __future__ import annotations

#: Standard acceleration of gravity [m/s^2] (CGPM 1901; also NIMA TR8350.2).
G_STANDARD = 9.80665
#: Rounded gravity used by many offshore standards and textbooks [m/s^2].
G_ROUNDED = 9.81
#: Default gravity used by wavebench blocks [m/s^2].
G = G_ROUNDED
#: Nominal sea-water density [kg/m^3] (DNV-RP-C205 uses 1025).
RHO_SEAWATER = 1025.0
#: Air density at 15 degC, sea level [kg/m^3] (ISO 2533 standard atmosphere).
RHO_AIR = 1.225
