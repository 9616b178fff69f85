"""Physical constants [SI].

h, c, k and e are exact by the 2019 definition of the SI; σ and the radiation constants
follow from them; ε₀ is the CODATA 2022 recommended value (Mohr et al., Rev. Mod. Phys. 97,
025002, 2025). The same numbers as ``scipy.constants`` (the tests check that), kept here so
that a command that only reads a design does not load scipy's constants machinery.
"""

import math

H = 6.62607015e-34  # Planck constant [J s]
C = 299792458.0  # speed of light in vacuum [m s⁻¹]
K_B = 1.380649e-23  # Boltzmann constant [J K⁻¹]
Q_E = 1.602176634e-19  # elementary charge [C]
EPSILON_0 = 8.8541878188e-12  # vacuum permittivity [F m⁻¹] (CODATA 2022)
SIGMA = 2.0 * math.pi**5 * K_B**4 / (15.0 * H**3 * C**2)  # Stefan–Boltzmann [W m⁻² K⁻⁴]
ZERO_CELSIUS = 273.15  # [K]
