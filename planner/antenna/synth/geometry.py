"""Wire geometry for the thin-wire solver: materials, wires, ports, loads, the model, and the
segmenter that turns polylines into straight segments and triangle basis functions.

Frame and units
---------------
x = east, y = north, z = up (as ``planner.antenna``), metres, hertz, ohms. Time dependence
e^{jwt}.

Materials and wire loss
-----------------------
A wire's conductor is a name from ``MATERIALS`` (resistivity in ohm m, ``"pec"`` = lossless) or
a resistivity as a number. At radio frequencies the current flows in a skin of depth
delta = sqrt(rho / (pi f mu0 mu_r)); the surface resistance is Rs = rho / delta and a round wire
of radius a >> delta has the resistance per unit length R' = Rs / (2 pi a) (uniform current
over the circumference; Balanis, Antenna Theory, sec. 2.14 and ch. 4). Copper-clad steel wire
uses copper's resistivity: for the usual 30-40 % IACS wire the cladding is tens of micrometres
thick, several skin depths at VHF/UHF, so the steel core carries almost no current (from
memory).

Segmentation
------------
Every polyline edge is split into ``ceil(edge_length * segments_per_wavelength / wavelength)``
equal straight segments (at least 1), or into ``Wire.segments_per_edge`` if given. A port or
load position, or an end of another wire, that lies on an edge (within ``JOIN_TOLERANCE_M``)
must become a node: if it already falls on a node of the edge's segmentation nothing changes,
otherwise the edge is first cut there and each piece is segmented as an edge of its own. Wires
that cross between nodes are not joined: put a vertex at the crossing in both to weld them.

Nodes, junctions and basis functions
------------------------------------
Segment ends closer than ``JOIN_TOLERANCE_M`` (1e-6 m) are one node, whichever wire they belong
to, so a closed loop (first point repeated at the end), two wires meeting end to end, and a
junction of several wires are all the same case. A node with k attached segment ends carries
k - 1 triangle basis functions: the reference end (a segment that ends at the node, if any,
else the first in wire order) is paired with each of the others in turn; each basis function
carries unit current out of the reference segment, through the node and into the other one.
Every basis function is divergence-free at the node, so Kirchhoff's current law holds for any
combination, and the k - 1 functions span every current distribution on the k ends that obeys
it (k - 1 independent currents). A free wire end (k = 1) carries no basis function: the current
is zero there. A basis function has two "pieces" (segment, end, sign): on segment s the piece
carries sign * T_end(u) along the segment's tangent, T_1(u) = u and T_0(u) = 1 - u, u the
fraction of the segment from its start.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from planner.constants import SPEED_OF_LIGHT_M_S, VACUUM_PERMEABILITY_H_PER_M
from planner.errors import UserError, warn

JOIN_TOLERANCE_M = 1e-6
"""Points closer than this are one node (joins wires, places ports and loads)."""

MATERIALS: dict[str, float | None] = {
    "pec": None,  # perfect conductor: lossless
    "copper": 1.68e-8,  # annealed copper at 20 C (handbook value)
    "aluminium": 2.65e-8,  # handbook value at 20 C (from memory)
    "copper-clad-steel": 1.68e-8,  # skin depth lies in the copper cladding (from memory; see module doc)
    "brass": 6.4e-8,  # typical 70/30 brass (from memory)
    "stainless-steel": 6.9e-7,  # 304 stainless, non-magnetic when annealed (from memory)
}
"""Conductor resistivity in ohm m; None means a perfect conductor."""


def resistivity_ohm_m(material: str | float) -> float | None:
    """Resistivity of a material name from ``MATERIALS`` or of a number (ohm m); None = PEC."""
    if isinstance(material, (int, float)) and not isinstance(material, bool):
        value = float(material)
        if not (math.isfinite(value) and value > 0):
            raise UserError(f"material: a resistivity must be a positive number of ohm m, got {material!r}")
        return value
    if isinstance(material, str) and material.strip().lower() in MATERIALS:
        return MATERIALS[material.strip().lower()]
    raise UserError(f"material {material!r} is unknown; allowed: {', '.join(MATERIALS)} or a resistivity in ohm m")


def skin_depth_m(resistivity_ohm_m: float, frequency_hz: float, mu_r: float = 1.0) -> float:
    """Skin depth delta = sqrt(rho / (pi f mu0 mu_r)) in metres."""
    return math.sqrt(resistivity_ohm_m / (math.pi * frequency_hz * VACUUM_PERMEABILITY_H_PER_M * mu_r))


def surface_resistance_ohm(resistivity_ohm_m: float, frequency_hz: float, mu_r: float = 1.0) -> float:
    """Surface resistance Rs = rho / delta = sqrt(pi f mu0 mu_r rho) in ohms (per square)."""
    return resistivity_ohm_m / skin_depth_m(resistivity_ohm_m, frequency_hz, mu_r)


def resistance_per_metre_ohm(resistivity_ohm_m: float | None, frequency_hz: float, radius_m: float, mu_r: float = 1.0) -> float:
    """Skin-effect resistance of a round wire per unit length, R' = Rs / (2 pi a) (ohm/m); 0 for PEC.

    Valid when the radius is several skin depths (a warning is given by the segmenter otherwise)."""
    if resistivity_ohm_m is None:
        return 0.0
    return surface_resistance_ohm(resistivity_ohm_m, frequency_hz, mu_r) / (2.0 * math.pi * radius_m)


def _point(value, what: str) -> np.ndarray:
    try:
        p = np.array(value, dtype=float).reshape(3)
    except (TypeError, ValueError):
        raise UserError(f"{what}: must be a point (x, y, z) in metres, got {value!r}") from None
    if not np.all(np.isfinite(p)):
        raise UserError(f"{what}: coordinates must be finite numbers, got {value!r}")
    return p


@dataclass(frozen=True, eq=False)
class Wire:
    """A thin round wire along a polyline ``points`` (n >= 2, 3) in metres."""

    points: np.ndarray
    radius_m: float
    material: str | float = "copper"
    name: str = ""
    segments_per_edge: int | None = None

    def __post_init__(self) -> None:
        label = f"wire {self.name!r}" if self.name else "wire"
        try:
            pts = np.array(self.points, dtype=float)
        except (TypeError, ValueError):
            raise UserError(f"{label}: points must be an (n, 3) array of metres") from None
        if pts.ndim != 2 or pts.shape[1] != 3 or pts.shape[0] < 2:
            raise UserError(f"{label}: points must be an (n, 3) array with n >= 2, got shape {pts.shape}")
        if not np.all(np.isfinite(pts)):
            raise UserError(f"{label}: points must be finite numbers")
        edges = np.linalg.norm(np.diff(pts, axis=0), axis=1)
        if np.any(edges <= JOIN_TOLERANCE_M):
            i = int(np.argmin(edges))
            raise UserError(
                f"{label}: points {i} and {i + 1} coincide; every polyline edge must be longer than {JOIN_TOLERANCE_M:g} m"
            )
        if not (isinstance(self.radius_m, (int, float)) and math.isfinite(self.radius_m) and self.radius_m > 0):
            raise UserError(f"{label}: radius_m must be a positive number of metres, got {self.radius_m!r}")
        resistivity_ohm_m(self.material)  # validates
        if self.segments_per_edge is not None:
            if not (isinstance(self.segments_per_edge, (int, np.integer)) and self.segments_per_edge >= 1):
                raise UserError(f"{label}: segments_per_edge must be a whole number >= 1, got {self.segments_per_edge!r}")
        pts.setflags(write=False)
        object.__setattr__(self, "points", pts)
        object.__setattr__(self, "radius_m", float(self.radius_m))

    @property
    def length_m(self) -> float:
        return float(np.sum(np.linalg.norm(np.diff(self.points, axis=0), axis=1)))


@dataclass(frozen=True, eq=False)
class Port:
    """A delta-gap voltage source at a node; ``direction`` +1/-1 along the wire's parametrisation."""

    name: str
    position: np.ndarray
    direction: int = 1
    wire: str | int | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "position", _point(self.position, f"port {self.name!r}: position"))
        if self.direction not in (1, -1):
            raise UserError(f"port {self.name!r}: direction must be +1 or -1, got {self.direction!r}")


@dataclass(frozen=True, eq=False)
class Load:
    """A lumped series impedance (ohms, complex) at a node."""

    position: np.ndarray
    impedance_ohm: complex
    name: str = ""
    wire: str | int | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "position", _point(self.position, f"load {self.name!r}: position"))
        try:
            z = complex(self.impedance_ohm)
        except (TypeError, ValueError):
            raise UserError(
                f"load {self.name!r}: impedance_ohm must be a complex number of ohms, got {self.impedance_ohm!r}"
            ) from None
        if not (math.isfinite(z.real) and math.isfinite(z.imag)):
            raise UserError(f"load {self.name!r}: impedance_ohm must be finite, got {self.impedance_ohm!r}")
        object.__setattr__(self, "impedance_ohm", z)


GROUNDS = ("free-space", "pec")


@dataclass(frozen=True, eq=False)
class WireModel:
    """Wires, ports and loads at one frequency, in free space or over an infinite PEC plane z = 0."""

    wires: Sequence[Wire]
    ports: Sequence[Port]
    loads: Sequence[Load] = ()
    frequency_hz: float | None = None
    ground: str = "free-space"
    segments_per_wavelength: float = 40.0
    max_segment_ratio: float = 0.25
    name: str = ""
    notes: Mapping[str, str] = field(default_factory=dict)

    def __post_init__(self) -> None:
        wires = tuple(self.wires)
        ports = tuple(self.ports)
        loads = tuple(self.loads)
        if not wires:
            raise UserError("model: wires must hold at least one wire")
        for w in wires:
            if not isinstance(w, Wire):
                raise UserError(f"model: wires must be Wire objects, got {type(w).__name__}")
        for p in ports:
            if not isinstance(p, Port):
                raise UserError(f"model: ports must be Port objects, got {type(p).__name__}")
        for ld in loads:
            if not isinstance(ld, Load):
                raise UserError(f"model: loads must be Load objects, got {type(ld).__name__}")
        names = [p.name for p in ports]
        if len(set(names)) != len(names):
            raise UserError(f"model: port names must be unique, got {names}")
        f = self.frequency_hz
        if not (isinstance(f, (int, float)) and math.isfinite(f) and f > 0):
            raise UserError(f"model: frequency_hz must be a positive number of hertz, got {f!r}")
        if self.ground not in GROUNDS:
            raise UserError(f"model: ground {self.ground!r} is unknown; allowed: {', '.join(GROUNDS)}")
        spw = self.segments_per_wavelength
        if not (isinstance(spw, (int, float)) and math.isfinite(spw) and spw > 0):
            raise UserError(f"model: segments_per_wavelength must be a positive number, got {spw!r}")
        if not (isinstance(self.max_segment_ratio, (int, float)) and self.max_segment_ratio > 0):
            raise UserError(f"model: max_segment_ratio must be a positive number, got {self.max_segment_ratio!r}")
        if self.ground == "pec":
            for i, w in enumerate(wires):
                low = float(np.min(w.points[:, 2]))
                if low <= w.radius_m:
                    label = w.name or f"#{i}"
                    raise UserError(
                        f"wire {label!r}: lowest point z = {low:g} m touches or crosses the ground plane z = 0; "
                        "over ground='pec' every wire must stay above it by more than its radius"
                    )
        object.__setattr__(self, "wires", wires)
        object.__setattr__(self, "ports", ports)
        object.__setattr__(self, "loads", loads)
        object.__setattr__(self, "frequency_hz", float(f))
        object.__setattr__(self, "notes", dict(self.notes))

    @property
    def wavelength_m(self) -> float:
        return SPEED_OF_LIGHT_M_S / self.frequency_hz

    @property
    def port_names(self) -> list[str]:
        return [p.name for p in self.ports]


@dataclass(frozen=True, eq=False)
class Segmentation:
    """Straight segments, nodes and triangle basis functions of a model (see the module doc)."""

    starts: np.ndarray  # (N, 3)
    ends: np.ndarray  # (N, 3)
    radii: np.ndarray  # (N,)
    resistance_per_m: np.ndarray  # (N,) ohm/m, 0 for PEC
    wire_index: np.ndarray  # (N,) int
    segment_nodes: np.ndarray  # (N, 2) node index of start and end
    node_positions: np.ndarray  # (n_nodes, 3)
    basis_node: np.ndarray  # (n_basis,) node index
    piece_basis: np.ndarray  # (2 n_basis,) basis index: pieces k and n_basis + k belong to basis k
    piece_segment: np.ndarray  # (n_pieces,)
    piece_end: np.ndarray  # (n_pieces,) 0 = start, 1 = end of the segment at the node
    piece_sign: np.ndarray  # (n_pieces,) +1/-1: current along (+1) or against the tangent
    port_basis: np.ndarray  # (n_ports,)
    port_sign: np.ndarray  # (n_ports,) +1/-1
    load_basis: np.ndarray  # (n_loads,)
    load_impedance_ohm: np.ndarray  # (n_loads,) complex
    ground: str = "free-space"

    @property
    def n_segments(self) -> int:
        return int(len(self.starts))

    @property
    def n_basis(self) -> int:
        return int(len(self.basis_node))

    @property
    def lengths(self) -> np.ndarray:
        return np.linalg.norm(self.ends - self.starts, axis=1)

    @property
    def tangents(self) -> np.ndarray:
        return (self.ends - self.starts) / self.lengths[:, None]

    @property
    def centres(self) -> np.ndarray:
        return 0.5 * (self.starts + self.ends)

    def expansion_matrix(self) -> np.ndarray:
        """C (2 N, n_basis): current coefficient at segment end (row 2 s + e) per unit basis current."""
        c = np.zeros((2 * self.n_segments, self.n_basis))
        np.add.at(c, (2 * self.piece_segment + self.piece_end, self.piece_basis), self.piece_sign)
        return c


def _split_parameters(a: np.ndarray, b: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Fractions t in (0, 1) along the edge a->b at which given points lie on its interior."""
    if len(points) == 0:
        return np.zeros(0)
    d = b - a
    length = float(np.linalg.norm(d))
    t = (points - a) @ d / length**2
    foot = a + t[:, None] * d
    dist = np.linalg.norm(points - foot, axis=1)
    inside = (dist < JOIN_TOLERANCE_M) & (t * length > JOIN_TOLERANCE_M) & ((1.0 - t) * length > JOIN_TOLERANCE_M)
    return np.unique(np.round(t[inside], 12))


def _merge_nodes(points: np.ndarray) -> np.ndarray:
    """Label points so that points within JOIN_TOLERANCE_M (transitively) share a label 0..m-1."""
    from scipy.spatial import cKDTree

    parent = np.arange(len(points))

    def find(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for i, j in cKDTree(points).query_pairs(JOIN_TOLERANCE_M, output_type="ndarray"):
        ri, rj = find(int(i)), find(int(j))
        if ri != rj:
            parent[max(ri, rj)] = min(ri, rj)
    roots = np.array([find(i) for i in range(len(points))])
    _, labels = np.unique(roots, return_inverse=True)
    return labels


def _wire_label(model: WireModel, index: int) -> str:
    return model.wires[index].name or f"#{index}"


def _resolve_wire(model: WireModel, wire: str | int | None, what: str) -> int | None:
    if wire is None:
        return None
    if isinstance(wire, (int, np.integer)) and not isinstance(wire, bool):
        if 0 <= int(wire) < len(model.wires):
            return int(wire)
    else:
        for i, w in enumerate(model.wires):
            if w.name == wire:
                return i
    raise UserError(f"{what}: wire {wire!r} is not in the model; give a wire name or index 0..{len(model.wires) - 1}")


def estimated_segment_count(model: WireModel) -> int:
    """The number of segments :func:`segment_model` will make, without making them: every edge
    split as the segmenter splits it. Cuts at ports, loads and other wires' ends can only add
    segments, so this never exceeds the real count (a size check on it refuses nothing that fits)."""
    wavelength = model.wavelength_m
    total = 0
    for w in model.wires:
        edges = np.linalg.norm(np.diff(w.points, axis=0), axis=1)
        if w.segments_per_edge is not None:
            total += int(w.segments_per_edge) * len(edges)
        else:
            total += int(np.sum(np.maximum(1, np.ceil(edges * model.segments_per_wavelength / wavelength - 1e-9))))
    return total


def segment_model(model: WireModel) -> Segmentation:
    """Split the model's wires into segments, join nodes, and build the basis functions."""
    wavelength = model.wavelength_m
    wires = model.wires
    # points where edges must be split: ports, loads, and ends of the other wires
    special = [p.position for p in model.ports] + [ld.position for ld in model.loads]
    ends_of = [(i, w.points[0]) for i, w in enumerate(wires)] + [(i, w.points[-1]) for i, w in enumerate(wires)]

    starts, ends, wire_index = [], [], []
    for i, w in enumerate(wires):

        def segment_count(length: float, w: Wire = w) -> int:
            if w.segments_per_edge is not None:
                return int(w.segments_per_edge)
            return max(1, math.ceil(length * model.segments_per_wavelength / wavelength - 1e-9))

        split = np.array(special + [p for j, p in ends_of if j != i], dtype=float).reshape(-1, 3)
        pts = w.points
        for k in range(len(pts) - 1):
            a, b = pts[k], pts[k + 1]
            edge_length = float(np.linalg.norm(b - a))
            cuts = _split_parameters(a, b, split)
            if len(cuts):
                # points that already fall on a node of the edge's own segmentation need no cut
                n_edge = segment_count(edge_length)
                on_node = np.abs(cuts * n_edge - np.round(cuts * n_edge)) * edge_length / n_edge < JOIN_TOLERANCE_M
                if np.all(on_node):
                    cuts = np.zeros(0)
            ts = np.concatenate([[0.0], cuts, [1.0]])
            for t0, t1 in zip(ts[:-1], ts[1:]):
                p0, p1 = a + t0 * (b - a), a + t1 * (b - a)
                n = segment_count(float(np.linalg.norm(p1 - p0)))
                u = np.linspace(0.0, 1.0, n + 1)[:, None]
                nodes = p0 + u * (p1 - p0)
                starts.append(nodes[:-1])
                ends.append(nodes[1:])
                wire_index.append(np.full(n, i))
    starts_a = np.concatenate(starts)
    ends_a = np.concatenate(ends)
    wire_a = np.concatenate(wire_index).astype(int)
    n_seg = len(starts_a)
    radii = np.array([wires[i].radius_m for i in wire_a])
    lengths = np.linalg.norm(ends_a - starts_a, axis=1)

    # thin-wire checks
    ratio = radii / lengths
    worst = int(np.argmax(ratio))
    if ratio[worst] > model.max_segment_ratio:
        warn(
            f"wire {_wire_label(model, int(wire_a[worst]))!r}: segment {lengths[worst]:.4g} m is only "
            f"{1.0 / ratio[worst]:.2g} radii long (thin-wire kernel wants > {1.0 / model.max_segment_ratio:.3g}); "
            "use fewer segments or a thinner wire"
        )
    if np.max(lengths) > wavelength / 8.0:
        warn(
            f"segments up to {np.max(lengths) / wavelength:.3g} wavelength long; use at least 10 per wavelength for usable currents"
        )
    k_a = 2.0 * math.pi * float(np.max(radii)) / wavelength
    if k_a > 0.1:
        warn(f"wire radius {np.max(radii):.4g} m gives k a = {k_a:.3g}: the thin-wire model wants k a << 1 (under 0.1)")

    frequency_hz = model.frequency_hz
    assert frequency_hz is not None  # WireModel.__post_init__ refuses a model without a frequency
    rho = [resistivity_ohm_m(w.material) for w in wires]
    r_per_m = np.array([resistance_per_metre_ohm(rho[i], frequency_hz, wires[i].radius_m) for i in range(len(wires))])[wire_a]
    for i, (w, rho_i) in enumerate(zip(wires, rho)):
        if rho_i is not None and w.radius_m < 3.0 * skin_depth_m(rho_i, frequency_hz):
            warn(
                f"wire {_wire_label(model, i)!r}: radius {w.radius_m:g} m is under 3 skin depths; the skin-effect resistance is underestimated"
            )

    # nodes
    labels = _merge_nodes(np.concatenate([starts_a, ends_a]))
    segment_nodes = np.stack([labels[:n_seg], labels[n_seg:]], axis=1)
    n_nodes = int(labels.max()) + 1
    node_positions = np.zeros((n_nodes, 3))
    node_positions[segment_nodes[:, 0]] = starts_a
    node_positions[segment_nodes[:, 1]] = ends_a
    if np.any(segment_nodes[:, 0] == segment_nodes[:, 1]):
        raise UserError(f"a segment shorter than {JOIN_TOLERANCE_M:g} m; check the wire points")

    # segment ends attached to every node, ordered: ends that finish at the node first, then wire order
    seg_ids = np.concatenate([np.arange(n_seg), np.arange(n_seg)])
    end_ids = np.concatenate([np.zeros(n_seg, int), np.ones(n_seg, int)])
    node_of = np.concatenate([segment_nodes[:, 0], segment_nodes[:, 1]])
    order = np.lexsort((seg_ids, end_ids == 0, node_of))
    node_sorted, seg_sorted, end_sorted = node_of[order], seg_ids[order], end_ids[order]
    first = np.searchsorted(node_sorted, np.arange(n_nodes))
    count = np.bincount(node_sorted, minlength=n_nodes)

    # basis: reference end (first) paired with each other end at the node
    others = np.ones(len(order), bool)
    others[first] = False  # every non-first entry is the "out" end of one basis function
    out_idx = np.nonzero(others)[0]
    ref_idx = first[node_sorted[out_idx]]
    n_basis = len(out_idx)
    basis_node = node_sorted[out_idx]
    # current flows INTO the node on the reference segment: along the tangent if the segment ends
    # there (end 1), against it if it starts there (end 0); OUT of the node on the other segment
    ref_sign = np.where(end_sorted[ref_idx] == 1, 1, -1)
    out_sign = np.where(end_sorted[out_idx] == 0, 1, -1)
    piece_basis = np.concatenate([np.arange(n_basis), np.arange(n_basis)])
    piece_segment = np.concatenate([seg_sorted[ref_idx], seg_sorted[out_idx]])
    piece_end = np.concatenate([end_sorted[ref_idx], end_sorted[out_idx]])
    piece_sign = np.concatenate([ref_sign, out_sign]).astype(float)

    def node_basis(position: np.ndarray, wire: str | int | None, what: str) -> tuple[int, int]:
        dist = np.linalg.norm(node_positions - position, axis=1)
        node = int(np.argmin(dist))
        if dist[node] > JOIN_TOLERANCE_M:
            raise UserError(
                f"{what}: position {tuple(np.round(position, 6))} m is not on any wire (nearest node {dist[node]:.3g} m away)"
            )
        if count[node] == 1:
            raise UserError(
                f"{what}: position {tuple(np.round(position, 6))} m is a free wire end; put it on a node between two segments"
            )
        if count[node] > 2:
            raise UserError(
                f"{what}: position {tuple(np.round(position, 6))} m is a junction of {count[node]} wires; put it on a node between two segments"
            )
        b = int(np.nonzero(basis_node == node)[0][0])
        pieces = np.nonzero(piece_basis == b)[0]
        chosen = _resolve_wire(model, wire, what)
        wires_here = wire_a[piece_segment[pieces]]
        if chosen is None:
            chosen = int(wires_here.min())
        elif chosen not in wires_here:
            raise UserError(f"{what}: wire {wire!r} does not pass through position {tuple(np.round(position, 6))} m")
        piece = pieces[np.nonzero(wires_here == chosen)[0][0]]
        return b, int(piece_sign[piece])

    port_basis: list[int] = []
    port_sign: list[int] = []
    for p in model.ports:
        b, s = node_basis(p.position, p.wire, f"port {p.name!r}")
        if b in port_basis:
            raise UserError(
                f"port {p.name!r}: shares its node with port {model.ports[port_basis.index(b)].name!r}; one port per node"
            )
        port_basis.append(b)
        port_sign.append(s * p.direction)
    load_basis, load_z = [], []
    for ld in model.loads:
        b, _ = node_basis(ld.position, ld.wire, f"load {ld.name!r}")
        load_basis.append(b)
        load_z.append(ld.impedance_ohm)

    return Segmentation(
        starts=starts_a,
        ends=ends_a,
        radii=radii,
        resistance_per_m=r_per_m,
        wire_index=wire_a,
        segment_nodes=segment_nodes,
        node_positions=node_positions,
        basis_node=basis_node,
        piece_basis=piece_basis,
        piece_segment=piece_segment,
        piece_end=piece_end,
        piece_sign=piece_sign,
        port_basis=np.array(port_basis, dtype=int),
        port_sign=np.array(port_sign, dtype=float),
        load_basis=np.array(load_basis, dtype=int),
        load_impedance_ohm=np.array(load_z, dtype=complex),
        ground=model.ground,
    )
