"""Seeded walk sets shared by the engine tests and the golden API record."""

import numpy as np

from pirchain.physics.scene import straight_walks


def mixed_walks(n, seed=3, rate=100.0, duration=8.0):
    """Walks 0.8–22 m out on all bearings of the lens, headings and speeds (0.3–2 m/s) at
    random: the close ones rail the amplifier."""
    rng = np.random.default_rng(seed)
    d = rng.uniform(0.8, 22.0, n)
    b = rng.uniform(-1.0, 1.0, n)
    c = np.stack([d * np.cos(b), d * np.sin(b)], axis=1)
    head = rng.normal(size=(n, 2))
    head /= np.linalg.norm(head, axis=1)[:, None]
    v = rng.uniform(0.3, 2.0, n)
    return straight_walks(c - head * (2.0 * v)[:, None], head, v, duration, rate)
