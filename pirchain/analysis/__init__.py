"""Analyses: what engineers come for, built on the chain's engine and a
:class:`pirchain.design.Design` with its :class:`pirchain.settings.AnalysisSettings`.

Owns walk tests and protocols, detection range per bearing, coverage maps, sweeps and the
range / false-trigger trade-off, the false-trigger rate (Rice's formula and Monte Carlo),
deterministic disturbances (drift, HVAC bursts) and power-up. May import everything below
it (base, physics, circuit, logic, chain, design); the user's edge builds on it.
"""
