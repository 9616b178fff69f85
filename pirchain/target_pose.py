"""Where each body part of a target is at every sample of a batch of walks.

Body parts always face the lens; their projected width depends on the angle ψ between the
walking direction and the line of sight: w(ψ) = √((w_front cos ψ)² + (w_side sin ψ)²), the
projected width of an elliptical body section (front view when walking along the line of
sight, side view when crossing it). A swinging arm is split into segments whose lateral
offset and height follow the swing angle.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .scene import Target, Walks


@dataclass(frozen=True)
class PartPose:
    """Floor position, half width and height range of each part, (walks, samples, parts) [m]."""

    x: np.ndarray
    y: np.ndarray
    half_width: np.ndarray
    z_bottom: np.ndarray
    z_top: np.ndarray


def _line_of_sight(position):
    rho = np.hypot(position[..., 0], position[..., 1])
    safe = np.where(rho > 0, rho, 1.0)
    los = np.where(rho[..., None] > 0, position / safe[..., None], np.array([1.0, 0.0]))
    return los


def pose(target: Target, walks: Walks) -> PartPose:
    """Pose of every part of ``target`` along ``walks``.

    Returns
    -------
    PartPose
        Arrays broadcastable to (walks, samples, parts), static parts first, then arm segments.
    """
    pos = walks.position
    los = _line_of_sight(pos)  # (W, T, 2)
    xs, ys, hws, z0s, z1s = [], [], [], [], []
    if target.parts:
        cos_psi = np.abs(np.sum(walks.heading * los, axis=-1))[..., None]
        sin_psi = np.sqrt(np.clip(1.0 - cos_psi**2, 0.0, None))
        wf = np.array([p.width_front for p in target.parts])
        ws = np.array([p.width_side for p in target.parts])
        hws.append(0.5 * np.sqrt((wf * cos_psi) ** 2 + (ws * sin_psi) ** 2))
        n = len(target.parts)
        xs.append(np.broadcast_to(pos[..., 0:1], pos.shape[:2] + (n,)))
        ys.append(np.broadcast_to(pos[..., 1:2], pos.shape[:2] + (n,)))
        z0s.append(
            np.broadcast_to(np.array([p.z_bottom for p in target.parts]), pos.shape[:2] + (n,))
        )
        z1s.append(np.broadcast_to(np.array([p.z_top for p in target.parts]), pos.shape[:2] + (n,)))
    if target.swing is not None:
        arm = target.swing
        m = arm.segments
        seg = arm.length / m
        theta = arm.angle(walks.time)[None, :, None]  # (1, T, 1)
        r = (np.arange(m) + 0.5) * seg  # (m,)
        c, s = np.abs(np.cos(theta)), np.abs(np.sin(theta))
        lat_extent = seg * c + arm.width * s
        vert_extent = seg * s + arm.width * c
        k = np.sqrt(seg * arm.width / (lat_extent * vert_extent))
        perp = np.stack([-los[..., 1], los[..., 0]], axis=-1)  # (W, T, 2)
        lateral = r * np.cos(theta)  # (1, T, m)
        shape = pos.shape[:2] + (m,)
        xs.append(pos[..., 0:1] + lateral * perp[..., 0:1])
        ys.append(pos[..., 1:2] + lateral * perp[..., 1:2])
        hws.append(np.broadcast_to(0.5 * k * lat_extent, shape))
        zc = arm.pivot_height + r * np.sin(theta)
        z0s.append(np.broadcast_to(zc - 0.5 * k * vert_extent, shape))
        z1s.append(np.broadcast_to(zc + 0.5 * k * vert_extent, shape))
    cat = [np.concatenate(a, axis=-1) for a in (xs, ys, hws, z0s, z1s)]
    return PartPose(*cat)
