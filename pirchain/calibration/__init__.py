"""Calibration of the model against the bench: fits of the parameters a bench cannot read
directly to measured captures (:mod:`.waveform`). May import every layer below the
interface (captures are read by :mod:`pirchain.interface.capture_file`)."""
