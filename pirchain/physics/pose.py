"""How a target's body parts present themselves to the lens: the pose rules.

Body parts always face the lens; their projected width depends on the angle ψ between the
walking direction and the line of sight, w(ψ) = √((w_front cos ψ)² + (w_side sin ψ)²), the
projected width of an elliptical body section (front view when walking along the line of
sight, side view when crossing it). A swinging arm is split into segments; each is the
rectangle of the same area and bounding-box aspect as the rotated bar, offset sideways and
in height by the swing angle.

The rules are plain scalar functions: :mod:`pirchain.kernels.optics` compiles them into
the chain's single pass, so each is written once. This module may import nothing from
pirchain.

References
----------
.. [1] Fanger, P. O., *Thermal Comfort* (1970): projected areas of a standing person, front
   and side (the widths that w_front, w_side scale to; :mod:`pirchain.physics.scene`).
"""

from __future__ import annotations

import math


def projected_half_width(half_front_sq: float, half_side_sq: float, cos2_psi: float) -> float:
    """Half the projected width of a body part seen at angle ψ from its walking direction [m].

    Parameters
    ----------
    half_front_sq, half_side_sq : float
        (w_front/2)² and (w_side/2)² [m²].
    cos2_psi : float
        cos² of the angle between heading and line of sight (1: walking straight at the lens).
    """
    return math.sqrt(half_front_sq * cos2_psi + half_side_sq * (1.0 - cos2_psi))


def arm_segment(radius: float, segment_length: float, width: float, angle: float):
    """Pose of one segment of a swinging arm, relative to the pivot.

    The segment (length ``segment_length``, width ``width``, its centre ``radius`` from the
    pivot) is turned ``angle`` above horizontal in the plane facing the lens; it is replaced
    by the upright rectangle with the same area whose sides keep the aspect of the rotated
    bar's bounding box.

    Returns
    -------
    lateral : float
        Sideways offset of the segment centre, across the line of sight [m].
    half_width : float
        Half the rectangle's width [m].
    rise : float
        Height of the segment centre above the pivot [m].
    half_height : float
        Half the rectangle's height [m].
    """
    c, s = abs(math.cos(angle)), abs(math.sin(angle))
    lat = segment_length * c + width * s
    vert = segment_length * s + width * c
    k = math.sqrt(segment_length * width / (lat * vert))
    return radius * math.cos(angle), 0.5 * k * lat, radius * math.sin(angle), 0.5 * k * vert
