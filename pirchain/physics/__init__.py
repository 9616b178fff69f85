"""Physics: what happens between a person and the sensor's gate, as pure functions and
frozen parameter objects.

Owns radiometry (band radiance, contrast), body heat (skin and clothing temperatures), the
scene (targets, room, paths and sampled walks), pose rules (projected widths, arm segments),
optics (lens facets, mounting, beams), the pyroelectric sensor (responsivity, transfer
function, discrete sections) and background disturbances (draughts, drift, HVAC bursts).
May import :mod:`pirchain.errors` and :mod:`pirchain.units` only; the compiled pass of
:mod:`pirchain.kernels` runs these models, never the other way round.
"""
