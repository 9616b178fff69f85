"""Sign-off for the units that will be built: tolerance Monte Carlo, yield against the
acceptance lines, worst-case corners, standard-value selection and their scale-out.

Owns :mod:`.tolerances` (expanding and drawing the tolerances of
:class:`pirchain.signoff.Tolerance`), :mod:`.acceptance` (one unit against the lines of
:class:`pirchain.signoff.Acceptance`), :mod:`.yields` (many units: yield, failures,
influence), :mod:`.corners`, :mod:`.eseries` (IEC 60063), :mod:`.choose` (value search) and
:mod:`.runners` (in-process, local processes or a Dask cluster). May import every layer
below the interface.
"""
