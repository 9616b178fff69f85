"""Analyses built on the chain: false triggers, detection range, coverage, sweeps."""
