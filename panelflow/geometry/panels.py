"""Panels: the straight-panel geometry of all bodies as flat arrays.

Bodies are stored one after the other. Body ``k`` owns the nodes ``node_start[k]:node_stop[k]``;
each surface panel joins two consecutive nodes of one body (a smooth body's last panel closes the
loop back to its first node). A blunt trailing edge adds one *base* panel from the body's last node
(lower trailing-edge corner) to its first (upper corner), kept apart from the surface panels.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.geometry.outline import BLUNT, SMOOTH


@dataclass(frozen=True)
class Panels:
    """Straight panels of one or more bodies.

    Attributes
    ----------
    nodes : ndarray, shape (m, 2)
        Node coordinates of all bodies.
    start, end : ndarray of int, shape (p,)
        Node index at each surface panel's start and end.
    body : ndarray of int, shape (p,)
        Body index of each surface panel.
    node_start, node_stop : ndarray of int, shape (k,)
        Node range of each body.
    kinds : tuple of str
        Trailing-edge kind of each body (``"sharp"``, ``"blunt"``, ``"none"``).
    names : tuple of str
        Body names.
    base_body : ndarray of int
        Bodies that have a base panel (blunt trailing edge).

    The derived arrays ``z1``, ``z2`` (complex panel end points), ``length``, ``tangent`` (complex
    unit vector), ``mid`` (complex midpoints) are computed once on construction.
    """

    nodes: np.ndarray
    start: np.ndarray
    end: np.ndarray
    body: np.ndarray
    node_start: np.ndarray
    node_stop: np.ndarray
    kinds: tuple
    names: tuple
    z1: np.ndarray = field(init=False, repr=False)
    z2: np.ndarray = field(init=False, repr=False)
    length: np.ndarray = field(init=False, repr=False)
    tangent: np.ndarray = field(init=False, repr=False)
    mid: np.ndarray = field(init=False, repr=False)

    def __post_init__(self):
        for arr in (self.nodes, self.start, self.end, self.body, self.node_start, self.node_stop):
            arr.setflags(write=False)
        zn = self.nodes[:, 0] + 1j * self.nodes[:, 1]
        z1, z2 = zn[self.start], zn[self.end]
        length = np.abs(z2 - z1)
        for name, value in (("z1", z1), ("z2", z2), ("length", length),
                            ("tangent", (z2 - z1) / length), ("mid", 0.5 * (z1 + z2))):
            value.setflags(write=False)
            object.__setattr__(self, name, value)

    @classmethod
    def from_panellings(cls, panellings) -> "Panels":
        """Join the panellings of several bodies into one set of panels."""
        nodes, start, end, body, n0, n1 = [], [], [], [], [], []
        offset = 0
        for k, pl in enumerate(panellings):
            pts = np.asarray(pl.nodes, float)
            if pl.outline.kind == SMOOTH:
                pts = pts[:-1]  # closed loop: last node is the first one again
                n = len(pts)
                a = np.arange(n)
                b = (a + 1) % n
            else:
                n = len(pts)
                a = np.arange(n - 1)
                b = a + 1
            nodes.append(pts)
            start.append(a + offset)
            end.append(b + offset)
            body.append(np.full(len(a), k))
            n0.append(offset)
            n1.append(offset + n)
            offset += n
        return cls(np.vstack(nodes), np.concatenate(start), np.concatenate(end),
                   np.concatenate(body), np.array(n0), np.array(n1),
                   tuple(pl.outline.kind for pl in panellings),
                   tuple(pl.outline.name for pl in panellings))

    @property
    def n_bodies(self) -> int:
        return len(self.kinds)

    @property
    def n_nodes(self) -> int:
        return len(self.nodes)

    @property
    def n_panels(self) -> int:
        return len(self.start)

    @property
    def base_body(self) -> np.ndarray:
        return np.array([k for k, kind in enumerate(self.kinds) if kind == BLUNT], int)

    @property
    def base_z1(self) -> np.ndarray:
        """Start (lower trailing-edge corner) of each base panel, complex."""
        zn = self.nodes[:, 0] + 1j * self.nodes[:, 1]
        return zn[self.node_stop[self.base_body] - 1]

    @property
    def base_z2(self) -> np.ndarray:
        """End (upper trailing-edge corner) of each base panel, complex."""
        zn = self.nodes[:, 0] + 1j * self.nodes[:, 1]
        return zn[self.node_start[self.base_body]]

    def body_nodes(self, k: int) -> slice:
        return slice(int(self.node_start[k]), int(self.node_stop[k]))

    def __repr__(self) -> str:
        return f"Panels({self.n_panels} panels, {self.n_bodies} bodies: {', '.join(self.names)})"
