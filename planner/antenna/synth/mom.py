"""Thin-wire method of moments: currents, port impedances and far fields of wire antennas.

Formulation (Harrington, *Field Computation by Moment Methods*, 1968, ch. 4 and 5)
-----------------------------------------------------------------------------------
Electric-field integral equation in mixed-potential form on straight segments, time
dependence e^{jwt}. With triangle basis functions f_n (see ``geometry``: unit current at the
node, falling linearly to zero at the far ends of the two adjacent segments) and **Galerkin**
testing (the test functions are the basis functions), the impedance matrix is

    Z_mn = (j k eta / 4 pi) [ int int f_m . f_n G dl dl'  -  (1/k^2) int int (df_m/dl)(df_n/dl') G dl dl' ]

with G = e^{-jkR}/R and the **reduced thin-wire kernel** R = sqrt(|r - r'|^2 + a^2): source
and observation points on the wire axes, a the wire radius (a^2 = a_s a_s' between wires of
different radii, which keeps Z symmetric). The first term is the vector potential (current), the
second the scalar potential (charge: df/dl = +-1/L on each segment).

Integration (**singularity extraction**): G = 1/R + (e^{-jkR} - 1)/R. The inner (source) integral
of the 1/R part is done in closed form over each straight segment: for a point at axial
position t and squared distance d^2 (including a^2) from the segment's line,
int_0^L dl'/R = asinh((L - t)/d) + asinh(t/d) and int_0^L l'/R dl' = [R]_0^L + t int dl'/R.
The smooth remainder (bounded, -jk at R = 0) is integrated with ``SMOOTH_POINTS`` (3)
Gauss-Legendre points on the source segment. The outer (test) integral uses Gauss-Legendre points
on the observation segment: ``quadrature_points`` (default 4) for well-separated pairs,
``NEAR_POINTS`` (16) for a segment with itself and with its near neighbours (centre distance under
the sum of the two lengths: found with a k-d tree), where the inner integral has a logarithmic
peak of width ~a (16 points integrate the self term to ~1e-7 relative for segment/radius ratios
4..50). Raising any of the three orders changes dipole and loop impedances by < 0.01 ohm.
Everything is vectorized over all (point, segment) pairs; the segment-end matrix is gathered
into the basis matrix (each basis function has two pieces). Memory grows as N^2: models up to
about 1,090 segments fit the memory limit (``check_matrix_size``, ``planner.limits``).

Sources, loads, loss and ground
-------------------------------
A port is a delta gap at a node: the test of the basis function centred there against the
gap field gives V_m = +-V (sign from the port direction), all other entries zero; the port
current is that basis function's coefficient. A lumped series load adds Z_L on the diagonal
of its node's basis function. Finite conductivity adds the distributed surface-impedance term
R' int f_m f_n dl (R' = Rs / (2 pi a); Galerkin over the overlap: L/3 for the same triangle
half, L/6 for the two halves on one segment). An infinite PEC plane z = 0 is replaced by the
images: mirrored segments with the horizontal current reversed and the vertical current kept
(equivalently: mirrored geometry, current and charge multiplied by -1); they enter both the
matrix and the far field, and there is no field below the plane.

The port impedance matrix comes from one solve with 1 V on each port in turn and the other
ports shorted (their gap voltage 0): Y_ij = I_i (V_j = 1); Z = Y^-1 (open-circuit matrix,
V = Z I). Far fields, powers and gains are linear/quadratic in the port voltages, so any
excitation is a superposition of the stored solutions.

Far field: E(r) = -j k eta e^{-jkr}/(4 pi r) [N - (N . r) r], N = sum over segments of
int I(l') t e^{jk r . r'} dl' (Gauss-Legendre, max(4, ``quadrature_points``) per segment,
images added).
The returned (E_theta, E_phi) omit e^{-jkr}/r, so the radiation intensity is
U = |E|^2 / (2 eta0) W/sr. Radiated power integrates U over the sphere (upper hemisphere over
ground) by Gauss-Legendre in sin(elevation) and the periodic trapezoid rule in azimuth, with
the order set by the electrical size (24 + 1.5 k r_max nodes, r_max about the model's centre).

Junctions: see ``geometry`` (k - 1 basis functions at a node of k segment ends, Kirchhoff's law
by construction).

What to expect (checked in tests/test_mom.py)
---------------------------------------------
The reaction of a sinusoidal current on a thin half-wave dipole reproduces the induced-EMF
impedance 73.1 + j42.5 ohm (Balanis eq. 4-93). The solved current of a finite-radius wire is not
quite sinusoidal: at exactly half a wavelength the delta-gap input resistance comes out above
73 ohm (about 86 ohm for a = lambda/1000, 78 ohm for a = 1e-5 lambda), and the dipole resonates at
0.476 wavelength (a = lambda/1000) with about 72 ohm. Far-field power equals the input power to
~1e-5 for lossless wires; the matrix is reciprocal to rounding.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from planner.antenna.analytic import circular_components, direction_enu, spherical_unit_vectors
from planner.antenna.synth.geometry import Segmentation, WireModel, estimated_segment_count, segment_model
from planner.antenna.table import GAIN_FLOOR_DBIC
from planner.constants import SPEED_OF_LIGHT_M_S, VACUUM_PERMEABILITY_H_PER_M, VACUUM_PERMITTIVITY_F_PER_M
from planner.errors import UserError
from planner.limits import (
    MEMORY_LIMIT_BYTES,
    MOM_BYTES_PER_SEGMENT_PAIR,
    MOM_SECONDS_PER_SEGMENT_PAIR,
    check_allocation,
    format_seconds,
)

ETA0_OHM = math.sqrt(VACUUM_PERMEABILITY_H_PER_M / VACUUM_PERMITTIVITY_F_PER_M)
"""Wave impedance of free space (ohm), from scipy.constants."""

NEAR_POINTS = 16

SMOOTH_POINTS = 3
"""Gauss-Legendre points on the source segment for the smooth remainder (e^{-jkR} - 1)/R (it
changes the impedance by < 1e-3 ohm against 8 points for segments up to lambda/10)."""
"""Outer Gauss-Legendre points for self and near-neighbour segment pairs."""

_CHUNK = 2_000_000  # entries per vectorized block (memory bound)


def _gauss01(n: int) -> tuple[np.ndarray, np.ndarray]:
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (x + 1.0), 0.5 * w


@dataclass(frozen=True)
class _Sources:
    """Source segments (the model's and, over ground, their images) for the inner integrals."""

    starts: np.ndarray
    tangents: np.ndarray
    lengths: np.ndarray
    radii: np.ndarray


def _images(seg: Segmentation) -> _Sources:
    mirror = np.array([1.0, 1.0, -1.0])
    starts = seg.starts * mirror
    ends = seg.ends * mirror
    lengths = seg.lengths
    return _Sources(starts, (ends - starts) / lengths[:, None], lengths, seg.radii)


def _inner(points, obs_radius, src: _Sources, index, k: float, src_points: int):
    """Inner integrals g0 = int G dl', g1 = int (l'/L') G dl' over source segments ``index``.

    ``points`` (..., 3) observation points, ``obs_radius`` broadcastable radius, ``index``
    broadcastable source indices (any pairing: used for the near pairs).
    """
    s0 = src.starts[index]
    tan = src.tangents[index]
    dp = points - s0
    t = np.einsum("...i,...i->...", dp, tan)
    perp2 = np.maximum(np.einsum("...i,...i->...", dp, dp) - t * t, 0.0)
    return _inner_kernel(t, perp2 + obs_radius * src.radii[index], src.lengths[index], k, src_points)


def _inner_kernel(t, d2, length, k: float, src_points: int):
    """The inner integrals from the axial position ``t`` of the observation point along the source
    segment (from its start) and its squared distance ``d2`` from the segment's line plus a^2.

    1/R part in closed form: int_0^L dl'/R = asinh((L - t)/d) + asinh(t/d) and
    int_0^L l'/R dl' = R(L) - R(0) + t int_0^L dl'/R; the rest by Gauss-Legendre on the segment.
    """
    d = np.sqrt(d2)
    k0 = np.arcsinh((length - t) / d) + np.arcsinh(t / d)
    r0 = np.sqrt(t * t + d2)
    r1 = np.sqrt((length - t) ** 2 + d2)
    k1 = (r1 - r0 + t * k0) / length
    # smooth part (e^{-jkR} - 1)/R = (-2 sin^2(kR/2) - j sin(kR))/R, free of cancellation;
    # real arithmetic (real sin/cos are several times faster than a complex exp)
    re0, im0 = k0, np.zeros_like(k0)
    re1, im1 = k1, np.zeros_like(k1)
    v, w = _gauss01(src_points)
    for vq, wq in zip(v, w):
        r = np.sqrt((vq * length - t) ** 2 + d2)
        half = 0.5 * k * r
        s = np.sin(half)
        scale = (2.0 * wq) * length / r
        sre = -scale * s * s
        sim = -scale * s * np.cos(half)
        re0 = re0 + sre
        im0 = im0 + sim
        re1 = re1 + vq * sre
        im1 = im1 + vq * sim
    return re0 + 1j * im0, re1 + 1j * im1


def _pair_integrals(seg: Segmentation, src: _Sources, k: float, n_outer: int, n_src: int):
    """J_ab[s, s'] = int_s int_s' u^a v^b G (a, b in {0, 1}) for all observation segments s and
    source segments s', outer rule with ``n_outer`` Gauss-Legendre points per segment.

    Every (point, source) pair at once: the axial position and distance come from matrix
    products (coordinates taken about the model's centre to keep them accurate)."""
    n_obs = seg.n_segments
    n_srcs = len(src.lengths)
    u, w = _gauss01(n_outer)
    origin = 0.5 * (seg.starts.min(axis=0) + seg.starts.max(axis=0))
    pts = (seg.starts - origin)[:, None, :] + u[None, :, None] * (seg.ends - seg.starts)[:, None, :]  # (N, q, 3)
    weights = w[None, :] * seg.lengths[:, None]  # (N, q)
    s0 = src.starts - origin
    tan = src.tangents
    s0_t = np.sum(s0 * tan, axis=1)
    s0_sq = np.sum(s0 * s0, axis=1)
    j = np.zeros((4, n_obs, n_srcs), dtype=complex)  # J00, J01, J10, J11
    rows = max(1, _CHUNK // max(1, n_outer * n_srcs))
    for lo in range(0, n_obs, rows):
        hi = min(n_obs, lo + rows)
        p = pts[lo:hi].reshape(-1, 3)
        t = p @ tan.T - s0_t[None, :]
        dist2 = np.sum(p * p, axis=1)[:, None] + s0_sq[None, :] - 2.0 * (p @ s0.T)
        a2 = np.repeat(seg.radii[lo:hi], n_outer)[:, None] * src.radii[None, :]
        d2 = np.maximum(dist2 - t * t, 0.0) + a2
        g0, g1 = _inner_kernel(t, d2, src.lengths[None, :], k, n_src)
        shape = (hi - lo, n_outer, n_srcs)
        g0, g1 = g0.reshape(shape), g1.reshape(shape)
        wb = weights[lo:hi]
        wu = wb * u[None, :]
        j[0, lo:hi] = np.einsum("rq,rqs->rs", wb, g0)
        j[1, lo:hi] = np.einsum("rq,rqs->rs", wb, g1)
        j[2, lo:hi] = np.einsum("rq,rqs->rs", wu, g0)
        j[3, lo:hi] = np.einsum("rq,rqs->rs", wu, g1)
    return j


def _near_pairs(seg: Segmentation, src: _Sources) -> tuple[np.ndarray, np.ndarray]:
    """(observation, source) pairs whose centres are closer than the sum of their lengths (plus
    four radii each): self terms, neighbours along a wire, segments meeting at a junction, and
    close parallel or crossing wires. A k-d tree keeps this O(N)."""
    from scipy.spatial import cKDTree

    centres = seg.centres
    src_centres = src.starts + 0.5 * src.lengths[:, None] * src.tangents
    reach = float(np.max(seg.lengths) + np.max(src.lengths) + 4.0 * (np.max(seg.radii) + np.max(src.radii)))
    found = cKDTree(centres).sparse_distance_matrix(cKDTree(src_centres), reach, output_type="ndarray")
    obs, srcs, dist = found["i"].astype(int), found["j"].astype(int), found["v"]
    # (the ndarray output keeps zero distances: a segment with itself)
    limit = seg.lengths[obs] + src.lengths[srcs] + 4.0 * (seg.radii[obs] + src.radii[srcs])
    keep = dist < limit
    return obs[keep], srcs[keep]


def _near_integrals(seg: Segmentation, src: _Sources, obs: np.ndarray, srcs: np.ndarray, k: float, n_outer: int, n_src: int):
    """J_ab for the listed (obs, src) pairs with an ``n_outer``-point outer rule."""
    u, w = _gauss01(n_outer)
    pts = seg.starts[obs, None, :] + u[None, :, None] * (seg.ends - seg.starts)[obs, None, :]  # (P, q, 3)
    g0, g1 = _inner(pts, seg.radii[obs, None], src, srcs[:, None], k, n_src)
    wb = w[None, :] * seg.lengths[obs, None]
    wu = wb * u[None, :]
    return np.stack([np.sum(wb * g0, 1), np.sum(wb * g1, 1), np.sum(wu * g0, 1), np.sum(wu * g1, 1)])


def _segment_end_matrix(seg: Segmentation, src: _Sources, k: float, n_outer: int, n_src: int) -> np.ndarray:
    """EFIE matrix between segment-end half-triangles, (2 N_obs, 2 N_src), row 2 s + e."""
    j = _pair_integrals(seg, src, k, n_outer, n_src)
    if NEAR_POINTS > n_outer:
        obs, srcs = _near_pairs(seg, src)
        if len(obs):
            j[:, obs, srcs] = _near_integrals(seg, src, obs, srcs, k, NEAR_POINTS, n_src)
    j00, j01, j10, j11 = j
    # I[e, e'] = int int T_e(u) T_e'(v) G with T_1 = u, T_0 = 1 - u
    i11 = j11
    i10 = j10 - j11
    i01 = j01 - j11
    i00 = j00 - j10 - j01 + j11
    n_obs, n_srcs = j00.shape
    tdot = seg.tangents @ src.tangents.T
    d_obs = np.stack([-1.0 / seg.lengths, 1.0 / seg.lengths], axis=1)  # (N, 2): df/dl of T_0, T_1
    d_src = np.stack([-1.0 / src.lengths, 1.0 / src.lengths], axis=1)
    vec = np.empty((n_obs, 2, n_srcs, 2), dtype=complex)
    vec[:, 0, :, 0] = i00
    vec[:, 0, :, 1] = i01
    vec[:, 1, :, 0] = i10
    vec[:, 1, :, 1] = i11
    vec *= tdot[:, None, :, None]
    scalar = d_obs[:, :, None, None] * d_src[None, None, :, :] * j00[:, None, :, None]
    zse = (1j * k * ETA0_OHM / (4.0 * math.pi)) * (vec - scalar / (k * k))
    return zse.reshape(2 * n_obs, 2 * n_srcs)


def check_matrix_size(n_segments: int) -> None:
    """Refuse a model whose moment-matrix fill would pass the memory limit, before filling it.

    The matrix is N x N in the segments (Harrington, Field Computation by Moment Methods, ch. 4),
    so memory grows as N^2 (``planner.limits.MOM_BYTES_PER_SEGMENT_PAIR``, the fill's measured
    peak) and the fill time too; the solve grows as N^3 but stays second to the fill at the sizes
    that fit.
    """
    pairs = n_segments * n_segments
    most = int(math.sqrt(MEMORY_LIMIT_BYTES / MOM_BYTES_PER_SEGMENT_PAIR))
    fill_time = format_seconds(pairs * MOM_SECONDS_PER_SEGMENT_PAIR)
    check_allocation(
        f"the wire model has {n_segments:,} segments, a {n_segments:,} x {n_segments:,} moment-matrix fill "
        f"taking about {fill_time} on one core",
        pairs,
        MOM_BYTES_PER_SEGMENT_PAIR,
        MEMORY_LIMIT_BYTES,
        f"at most about {most:,} segments fit; lower segments_per_wavelength or segments, or use a coarser "
        "grid_pitch_wavelengths or a smaller reflector_size_wavelengths",
    )


def impedance_matrix(seg: Segmentation, frequency_hz: float, *, quadrature_points: int = 4) -> np.ndarray:
    """Galerkin impedance matrix (n_basis, n_basis) of a segmented model, loads and loss included."""
    check_matrix_size(seg.n_segments)
    k = 2.0 * math.pi * frequency_hz / SPEED_OF_LIGHT_M_S
    own = _Sources(seg.starts, seg.tangents, seg.lengths, seg.radii)
    zse = _segment_end_matrix(seg, own, k, quadrature_points, SMOOTH_POINTS)
    if seg.ground == "pec":
        # image current and charge are the mirrored ones times -1
        zse = zse - _segment_end_matrix(seg, _images(seg), k, quadrature_points, SMOOTH_POINTS)
    # distributed skin-effect resistance: R' int T_e T_e' dl = R' L (1/3 same end, 1/6 other end)
    if np.any(seg.resistance_per_m > 0):
        n = seg.n_segments
        block = seg.resistance_per_m * seg.lengths
        idx = 2 * np.arange(n)
        zse[idx, idx] += block / 3.0
        zse[idx + 1, idx + 1] += block / 3.0
        zse[idx, idx + 1] += block / 6.0
        zse[idx + 1, idx] += block / 6.0
    # Z = C^T Zse C with C the (sparse) expansion matrix: every basis function has two pieces
    n_b = seg.n_basis
    rows = (2 * seg.piece_segment + seg.piece_end).reshape(2, n_b)
    signs = seg.piece_sign.reshape(2, n_b)
    z = np.zeros((n_b, n_b), dtype=complex)
    for i in range(2):
        for j in range(2):
            z += (signs[i][:, None] * signs[j][None, :]) * zse[np.ix_(rows[i], rows[j])]
    if len(seg.load_basis):
        np.add.at(z, (seg.load_basis, seg.load_basis), seg.load_impedance_ohm)
    return z


class Solution:
    """Solved currents of a model for 1 V on each port in turn (the others shorted)."""

    def __init__(
        self,
        model: WireModel,
        segmentation: Segmentation,
        impedance_matrix_: np.ndarray,
        currents_per_port: np.ndarray,
        quadrature_points: int,
    ) -> None:
        self.model = model
        self.segmentation = segmentation
        frequency_hz = model.frequency_hz
        assert frequency_hz is not None  # WireModel.__post_init__ refuses a model without a frequency
        self.frequency_hz = frequency_hz
        self.wavenumber = 2.0 * math.pi * frequency_hz / SPEED_OF_LIGHT_M_S
        self.impedance_matrix = impedance_matrix_
        self.currents_per_port = currents_per_port
        self.port_names = model.port_names
        self.quadrature_points = quadrature_points
        self._radiators: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None
        self._power_grid: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None

    @property
    def segments(self) -> Segmentation:
        """The segmentation (``centres``, ``starts``, ``ends``, ``tangents``, ``lengths``, ...)."""
        return self.segmentation

    # -- excitation -----------------------------------------------------------------------

    @property
    def n_ports(self) -> int:
        return len(self.port_names)

    def _voltages(self, port_voltages) -> np.ndarray:
        if port_voltages is None:
            if self.n_ports != 1:
                raise UserError(
                    f"port_voltages: this model has {self.n_ports} ports ({', '.join(self.port_names)}); give one voltage per port"
                )
            return np.ones(1, dtype=complex)
        if isinstance(port_voltages, Mapping):
            unknown = [name for name in port_voltages if name not in self.port_names]
            if unknown:
                raise UserError(f"port_voltages: unknown port {unknown[0]!r}; ports: {', '.join(self.port_names)}")
            return np.array([complex(port_voltages.get(name, 0.0)) for name in self.port_names])
        v = np.atleast_1d(np.asarray(port_voltages, dtype=complex))
        if v.shape != (self.n_ports,):
            raise UserError(
                f"port_voltages: expected {self.n_ports} values (ports {', '.join(self.port_names)}), got shape {v.shape}"
            )
        return v

    def currents(self, port_voltages=None) -> np.ndarray:
        """Basis (node) currents in A for the given port voltages."""
        return self.currents_per_port @ self._voltages(port_voltages)

    def port_admittance_matrix(self) -> np.ndarray:
        """Short-circuit admittance matrix Y (S): I_i for 1 V on port j, the others shorted."""
        seg = self.segmentation
        return seg.port_sign[:, None] * self.currents_per_port[seg.port_basis, :]

    def port_impedance_matrix(self) -> np.ndarray:
        """Open-circuit impedance matrix Z = Y^-1 (ohm): V = Z I at the ports."""
        return np.linalg.inv(self.port_admittance_matrix())

    def port_currents(self, port_voltages=None) -> np.ndarray:
        return self.port_admittance_matrix() @ self._voltages(port_voltages)

    def input_impedance(self, port_voltages=None) -> np.ndarray:
        """Active input impedance V_i / I_i of every port for the excitation (ohm)."""
        v = self._voltages(port_voltages)
        i = self.port_currents(v)
        with np.errstate(divide="ignore", invalid="ignore"):
            return v / i

    def segment_end_currents(self, port_voltages=None) -> np.ndarray:
        """(N, 2) current along each segment's tangent at its start and end (A)."""
        c = self.segmentation.expansion_matrix() @ self.currents(port_voltages)
        return c.reshape(-1, 2)

    # -- powers ---------------------------------------------------------------------------

    def input_power_w(self, port_voltages=None) -> float:
        """Power delivered into the ports, 0.5 Re sum V I* (W)."""
        v = self._voltages(port_voltages)
        return float(0.5 * np.real(np.sum(v * np.conj(self.port_currents(v)))))

    def ohmic_loss_w(self, port_voltages=None) -> float:
        """Skin-effect loss in the wires, 0.5 sum R' int |I|^2 dl (W); exact for linear currents."""
        seg = self.segmentation
        c = self.segment_end_currents(port_voltages)
        i0, i1 = c[:, 0], c[:, 1]
        integral = seg.lengths * (np.abs(i0) ** 2 + np.abs(i1) ** 2 + np.real(i0 * np.conj(i1))) / 3.0
        return float(0.5 * np.sum(seg.resistance_per_m * integral))

    def load_loss_w(self, port_voltages=None) -> float:
        """Power dissipated in the lumped loads, 0.5 sum Re(Z_L) |I|^2 (W)."""
        seg = self.segmentation
        if len(seg.load_basis) == 0:
            return 0.0
        i = self.currents(port_voltages)[seg.load_basis]
        return float(0.5 * np.sum(np.real(seg.load_impedance_ohm) * np.abs(i) ** 2))

    def radiation_efficiency(self, port_voltages=None) -> float:
        """1 - (wire loss + load loss) / input power: the fraction of the input power radiated."""
        p_in = self.input_power_w(port_voltages)
        if p_in <= 0:
            raise UserError("port_voltages: the excitation delivers no power; cannot form an efficiency")
        return 1.0 - (self.ohmic_loss_w(port_voltages) + self.load_loss_w(port_voltages)) / p_in

    # -- far field ------------------------------------------------------------------------

    def _radiating_points(self):
        """Quadrature points, weights on the two segment-end currents, and tangent vectors of the
        currents (images appended over ground); cached."""
        if self._radiators is None:
            seg = self.segmentation
            u, w = _gauss01(max(4, self.quadrature_points))
            pts = seg.starts[:, None, :] + u[None, :, None] * (seg.ends - seg.starts)[:, None, :]
            wl = w[None, :] * seg.lengths[:, None]
            weights = np.stack([wl * (1.0 - u)[None, :], wl * u[None, :]], axis=-1)  # (N, q, 2)
            tangents = np.broadcast_to(seg.tangents[:, None, :], pts.shape)
            if seg.ground == "pec":
                mirror = np.array([1.0, 1.0, -1.0])
                pts = np.concatenate([pts, pts * mirror])
                weights = np.concatenate([weights, weights])
                tangents = np.concatenate([tangents, -tangents * mirror])  # horizontal reversed, vertical kept
            self._radiators = (pts, weights, tangents)
        return self._radiators

    def _radiation_vector(self, r_hat: np.ndarray, port_voltages) -> np.ndarray:
        """N(r) = int I t e^{jk r.r'} dl' (A m), shape r_hat.shape."""
        pts, weights, tangents = self._radiating_points()
        c = self.segment_end_currents(port_voltages)
        if self.segmentation.ground == "pec":
            c = np.concatenate([c, c])
        moment = np.einsum("sqe,se->sq", weights, c)  # (N, q)
        vectors = (moment[..., None] * tangents).reshape(-1, 3)
        v_re, v_im = np.ascontiguousarray(vectors.real), np.ascontiguousarray(vectors.imag)
        flat_pts = pts.reshape(-1, 3)
        flat_dir = r_hat.reshape(-1, 3)
        out = np.empty((len(flat_dir), 3), dtype=complex)
        rows = max(1, _CHUNK // max(1, len(flat_pts)))
        for lo in range(0, len(flat_dir), rows):
            arg = self.wavenumber * (flat_dir[lo : lo + rows] @ flat_pts.T)
            cos_, sin_ = np.cos(arg), np.sin(arg)  # e^{j arg}, in real arithmetic
            out[lo : lo + rows].real = cos_ @ v_re - sin_ @ v_im
            out[lo : lo + rows].imag = cos_ @ v_im + sin_ @ v_re
        return out.reshape(r_hat.shape)

    def far_field(self, azimuth_deg, elevation_deg, port_voltages=None) -> tuple[np.ndarray, np.ndarray]:
        """(E_theta, E_phi) in V (r e^{jkr} E), U = |E|^2 / (2 eta0); zero below a PEC ground."""
        az, el = np.broadcast_arrays(np.asarray(azimuth_deg, dtype=float), np.asarray(elevation_deg, dtype=float))
        r_hat = direction_enu(az, el)
        n_vec = self._radiation_vector(r_hat, port_voltages)
        theta_hat, phi_hat = spherical_unit_vectors(az, el)
        factor = -1j * self.wavenumber * ETA0_OHM / (4.0 * math.pi)
        e_theta = factor * np.sum(n_vec * theta_hat, axis=-1)
        e_phi = factor * np.sum(n_vec * phi_hat, axis=-1)
        if self.segmentation.ground == "pec":
            below = el < 0.0
            e_theta = np.where(below, 0.0, e_theta)
            e_phi = np.where(below, 0.0, e_phi)
        return e_theta, e_phi

    def radiation_intensity(self, azimuth_deg, elevation_deg, port_voltages=None) -> np.ndarray:
        """U = |E|^2 / (2 eta0) in W/sr."""
        e_theta, e_phi = self.far_field(azimuth_deg, elevation_deg, port_voltages)
        return (np.abs(e_theta) ** 2 + np.abs(e_phi) ** 2) / (2.0 * ETA0_OHM)

    def _sphere_grid(self):
        if self._power_grid is None:
            pts, _, _ = self._radiating_points()
            flat = pts.reshape(-1, 3)
            centre = 0.5 * (flat.min(axis=0) + flat.max(axis=0))  # |E|^2 is smooth on the scale of k * size
            extent = float(np.max(np.linalg.norm(flat - centre, axis=1)))
            n_mu = int(24 + math.ceil(1.5 * self.wavenumber * extent))
            n_az = 2 * n_mu
            x, w = np.polynomial.legendre.leggauss(n_mu)
            if self.segmentation.ground == "pec":
                mu, w_mu = 0.5 * (x + 1.0), 0.5 * w
            else:
                mu, w_mu = x, w
            el = np.degrees(np.arcsin(mu))
            az = np.arange(n_az) * (360.0 / n_az)
            self._power_grid = (az, el, w_mu * (2.0 * math.pi / n_az))
        return self._power_grid

    def radiated_power_w(self, port_voltages=None) -> float:
        """Far-field intensity integrated over the sphere (upper hemisphere over ground), W."""
        az, el, w = self._sphere_grid()
        u = self.radiation_intensity(az[None, :], el[:, None], port_voltages)
        return float(np.sum(w[:, None] * u))

    def directivity_dbi(self, azimuth_deg, elevation_deg, port_voltages=None) -> np.ndarray:
        """Directivity 4 pi U / P_rad in dBi."""
        u = self.radiation_intensity(azimuth_deg, elevation_deg, port_voltages)
        with np.errstate(divide="ignore"):
            return 10.0 * np.log10(4.0 * math.pi * u / self.radiated_power_w(port_voltages))

    def gain_dbi(self, azimuth_deg, elevation_deg, port_voltages=None) -> np.ndarray:
        """Total gain 4 pi U / P_in in dBi (losses included); floored at GAIN_FLOOR_DBIC."""
        u = self.radiation_intensity(azimuth_deg, elevation_deg, port_voltages)
        g = 4.0 * math.pi * u / self.input_power_w(port_voltages)
        with np.errstate(divide="ignore"):
            return np.maximum(10.0 * np.log10(g), GAIN_FLOOR_DBIC)

    def gains_dbic(self, azimuth_deg, elevation_deg, port_voltages=None) -> tuple[np.ndarray, np.ndarray]:
        """Partial gains (RHCP, LHCP) in dBic relative to the input power (so losses show),
        IEEE Std 145 senses via ``planner.antenna.analytic.circular_components``; floored at
        GAIN_FLOOR_DBIC (no field, e.g. below a PEC ground)."""
        az, el = np.broadcast_arrays(np.asarray(azimuth_deg, dtype=float), np.asarray(elevation_deg, dtype=float))
        e_theta, e_phi = self.far_field(az, el, port_voltages)
        return partial_gains_dbic(e_theta, e_phi, az, el, self.input_power_w(port_voltages))

    # -- description ----------------------------------------------------------------------

    def solver_summary(self) -> str:
        """One line for pattern-table headers: method, segments, basis, testing, ground."""
        seg = self.segmentation
        return (
            f"thin-wire MoM (EFIE, mixed potential); {seg.n_segments} segments, {seg.n_basis} triangle basis functions, "
            f"Galerkin testing, reduced kernel, 1/R extracted analytically, Gauss-Legendre {self.quadrature_points}/"
            f"{NEAR_POINTS} points; ground {seg.ground}"
        )


def partial_gains_dbic(e_theta, e_phi, azimuth_deg, elevation_deg, input_power_w: float) -> tuple[np.ndarray, np.ndarray]:
    """Partial gains (RHCP, LHCP) in dBic of far-field components (normalised as ``Solution.far_field``)
    relative to ``input_power_w``: G = 4 pi U / P_in with U = |E|^2 / (2 eta0); floored at GAIN_FLOOR_DBIC."""
    theta_hat, phi_hat = spherical_unit_vectors(azimuth_deg, elevation_deg)
    field = e_theta[..., None] * theta_hat + e_phi[..., None] * phi_hat
    e_r, e_l = circular_components(field, azimuth_deg, elevation_deg)
    scale = 4.0 * math.pi / (2.0 * ETA0_OHM * input_power_w)
    with np.errstate(divide="ignore"):
        rhcp = np.maximum(10.0 * np.log10(scale * np.abs(e_r) ** 2), GAIN_FLOOR_DBIC)
        lhcp = np.maximum(10.0 * np.log10(scale * np.abs(e_l) ** 2), GAIN_FLOOR_DBIC)
    return rhcp, lhcp


def solve(model: WireModel, *, quadrature_points: int = 4) -> Solution:
    """Segment the model, fill the Galerkin matrix and solve for 1 V on each port in turn."""
    if not (isinstance(quadrature_points, int) and 1 <= quadrature_points <= 32):
        raise UserError(f"quadrature_points: must be a whole number 1..32, got {quadrature_points!r}")
    if not model.ports:
        raise UserError("model: has no ports; add at least one Port to excite it")
    check_matrix_size(estimated_segment_count(model))  # before segmenting: a huge model is refused at once
    seg = segment_model(model)
    assert model.frequency_hz is not None  # WireModel.__post_init__ refuses a model without a frequency
    z = impedance_matrix(seg, model.frequency_hz, quadrature_points=quadrature_points)
    rhs = np.zeros((seg.n_basis, len(model.ports)), dtype=complex)
    rhs[seg.port_basis, np.arange(len(model.ports))] = seg.port_sign
    try:
        currents = np.linalg.solve(z, rhs)
    except np.linalg.LinAlgError:
        raise UserError("model: the moment matrix is singular; check for overlapping or duplicated wires") from None
    return Solution(model, seg, z, currents, quadrature_points)
