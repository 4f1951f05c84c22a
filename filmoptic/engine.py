"""Transfer-matrix engine: reflectance, transmittance and absorptance of a coating stack.

The engine works on whole grids at once: wavelengths × any batch of layer-thickness sets × angles
of incidence, in one vectorised numpy pass (the only Python loops run over layers and over memory
chunks, never over wavelengths, thicknesses or angles).

Method
------
Each run of consecutive coherent layers (a *packet*) between two incoherent media is solved with
the characteristic (transfer) matrix method (Abelès; Macleod ch. 2; Byrnes 2016). Every layer's
matrix is rescaled by its own propagation factor ``exp(+i·δ)`` with ``Im δ >= 0``, which leaves
only ``exp(2i·δ)``, of modulus at most 1: a micrometre of copper or ten of titanium underflows
gracefully to zero transmission instead of overflowing. The scale factors, needed only for the
magnitude of the transmission amplitude, are carried as sums of logarithms, and the running
product is rescaled every few layers, so stacks of thousands of layers stay in range too. Only
the columns of the product that the answer needs are formed, applied from the back of the
packet to the front (three complex multiplications per layer and polarisation).

Thick slabs (a glass plate, a wafer: anything written in mm) are incoherent: their internal
reflections add in intensity, including the slab's own absorption at the refraction angle. The
packets and slabs are combined with the intensity form of the same recursion (Byrnes 2016;
Katsidis & Siapkas 2002), which again never divides by a vanishing single-pass transmittance.

Conventions follow the ``tmm`` package (Byrnes 2016) so that the two agree to rounding:
N = n + i·k with k >= 0; the normal wave-vector component ``n·cos θ`` of every medium is taken
on the forward branch (decaying, or carrying power forward when lossless); transmittance into a
medium is ``|t|²`` times the ratio of the real parts of the normal power factors.

References
----------
.. [1] H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press (2010), ch. 2.
.. [2] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge (1999), §1.6.
.. [3] S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720 (2016).
.. [4] C. C. Katsidis and D. I. Siapkas, "General transfer-matrix method for optical multilayer
       systems with coherent, partially coherent, and incoherent interference",
       Appl. Opt. 41, 3978 (2002).
"""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError

__all__ = ["Spectrum", "WeightedSpectrum", "POLARIZATIONS", "TRANSMISSION_MEANINGS", "CHANNELS", "compute",
           "compute_weighted", "compute_indices", "CHUNK_BYTES", "interface_count", "check_work"]

#: The polarisation names :func:`compute` accepts.
POLARIZATIONS = ("s", "p", "unpolarized")

#: What :attr:`Spectrum.T` means, by the kind of substrate (see :class:`Spectrum`), in words the
#: command line prints once under a table.
TRANSMISSION_MEANINGS = {
    "exits": "T is the light that leaves the substrate's back face",
    "enters substrate": "T is the light that enters the half-space substrate (its back face is "
                        "not modelled; give the substrate a thickness in mm to include it)",
    "opaque": "the substrate is an absorbing half-space: no light comes through (T = 0); what "
              "enters it is counted as absorbed in the substrate",
}

#: Memory budget of one chunk of the grid, in bytes (the engine's working arrays stay under it).
CHUNK_BYTES = 64 * 2**20

# Chunks are also kept near this many grid points: small enough to stay in the CPU cache, large
# enough that numpy's per-call overhead does not matter.
_CACHE_POINTS = 1 << 15
_COMPLEX_BYTES = 16
# Working arrays of one chunk, counted in complex grid-sized arrays (amplitudes of both
# polarisations and directions plus temporaries).
_WORKING_ARRAYS = 24

_ALIASES = {
    "s": "s", "te": "s",
    "p": "p", "tm": "p",
    "unpolarized": "unpolarized", "unpolarised": "unpolarized", "u": "unpolarized",
    "mixed": "unpolarized", "natural": "unpolarized",
}


@dataclass(frozen=True)
class Spectrum:
    """Reflectance, transmittance and absorptance of a stack (fractions 0–1).

    Attributes
    ----------
    wavelength_nm : numpy.ndarray
        Wavelengths, shape ``(W,)``.
    angle_deg : float or numpy.ndarray
        Angle(s) of incidence in the medium the light comes from, degrees.
    polarization : str
        ``"s"``, ``"p"`` or ``"unpolarized"`` (the mean of s and p).
    R, T, A : numpy.ndarray
        Shape ``(*batch, *numpy.shape(angle_deg), W)``; ``A = 1 − R − T``. ``T`` is the light
        that leaves the part on its far side: behind a substrate slab, the light reaching the
        exit medium; for a practically transparent half-space substrate, the light entering it
        (it would leave through the back face of any real plate, less that face's reflection);
        for an absorbing half-space (a metal, silicon) zero, since what enters it never
        comes out.
    A_layers, A_substrate : numpy.ndarray
        The split of ``A`` (same shape, ``A = A_layers + A_substrate``): light absorbed in the
        layers (every item before the substrate, thick slabs among them included) and in the
        substrate (inside a substrate slab, or everything that enters an absorbing
        half-space).
    transmission : str
        What ``T`` means for this stack, from :data:`TRANSMISSION_MEANINGS`: ``"exits"`` (a
        substrate slab: light reaching the exit medium), ``"enters substrate"`` (a practically
        transparent half-space) or ``"opaque"`` (an absorbing half-space; ``T`` is zero).
    """

    wavelength_nm: np.ndarray
    angle_deg: float | np.ndarray
    polarization: str
    R: np.ndarray
    T: np.ndarray
    A: np.ndarray
    A_layers: np.ndarray
    A_substrate: np.ndarray
    transmission: str = "exits"


# ----------------------------------------------------------------------------------------------
# Public entry points
# ----------------------------------------------------------------------------------------------
def compute(stack, wavelength_nm, *, angle_deg=0.0, polarization="unpolarized", reverse=False,
            thickness_nm=None, extrapolate=False) -> Spectrum:
    """Reflectance, transmittance and absorptance of a stack.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        The stack (a string is parsed with :func:`filmoptic.stack.parse_stack`).
    wavelength_nm : float or array_like
        Vacuum wavelengths in nm, 1-D.
    angle_deg : float or array_like, optional
        Angle(s) of incidence in degrees, 0 to 89.999, in the medium the light comes from
        (the ambient, or with ``reverse=True`` the medium on the substrate side). Any shape.
    polarization : {"s", "p", "unpolarized"}, optional
        ``"unpolarized"`` averages the s and p results.
    reverse : bool, optional
        Send the light in from the substrate side: through a thick substrate's back face, or
        through a half-space substrate that is practically transparent (k/n ≤ 1e-4, the rule
        for any incident medium); an absorbing half-space (a metal, silicon) is refused.
    thickness_nm : array_like, optional
        Shape ``(*batch, K)``: the K free thicknesses of the stack (in
        ``stack.thickness_parameters`` order) for each thickness set of the batch. The whole
        batch runs in one vectorised pass.
    extrapolate : bool, optional
        Let tabulated materials hold their end values outside their range (with a warning).

    Returns
    -------
    Spectrum
        R, T and A of shape ``(*batch, *numpy.shape(angle_deg), W)``.

    References
    ----------
    Macleod, *Thin-Film Optical Filters*, ch. 2; Byrnes, arXiv:1603.02720 (2016);
    Katsidis & Siapkas, Appl. Opt. 41, 3978 (2002).

    Examples
    --------
    >>> from filmoptic.stack import parse_stack
    >>> s = compute(parse_stack("n=1.52", ambient="n=1"), [550.0])   # bare glass, in vacuum
    >>> round(float(s.R[0]), 4)
    0.0426
    >>> s = compute("TiO2 ? / glass 3mm", [450.0, 550.0], thickness_nm=[[0.0], [60.0], [120.0]])
    >>> s.R.shape                  # 3 thickness sets × 2 wavelengths, in one pass
    (3, 2)
    """
    job = _Job(stack, wavelength_nm, angle_deg, polarization, reverse, thickness_nm, extrapolate)
    sink = _SpectraSink(job)
    job.run(sink.take)
    R, T, A, A_layers, A_substrate = sink.result()
    return Spectrum(wavelength_nm=job.wl, angle_deg=job.angle_out, polarization=job.pol, R=R, T=T, A=A,
                    A_layers=A_layers, A_substrate=A_substrate, transmission=job.transmission)


#: The channels :func:`compute_weighted` can reduce.
CHANNELS = ("R", "T", "A", "A_layers", "A_substrate")


@dataclass(frozen=True)
class WeightedSpectrum:
    """Weighted sums over wavelength of R, T, A and A's split: spectra reduced inside the engine.

    Attributes
    ----------
    wavelength_nm : numpy.ndarray
        The wavelengths, shape ``(W,)``.
    weights : numpy.ndarray
        The weights as given, shape ``(W,)`` or ``(W, *M)``.
    angle_deg, polarization, transmission
        As in :class:`Spectrum`.
    R, T, A, A_layers, A_substrate : numpy.ndarray or None
        ``Σ_λ channel(λ)·weights[λ, …]``, shape ``(*batch, *numpy.shape(angle_deg), *M)``; None for
        a channel that was not asked for.
    """

    wavelength_nm: np.ndarray
    weights: np.ndarray
    angle_deg: float | np.ndarray
    polarization: str
    R: np.ndarray | None = None
    T: np.ndarray | None = None
    A: np.ndarray | None = None
    A_layers: np.ndarray | None = None
    A_substrate: np.ndarray | None = None
    transmission: str = "exits"


def compute_weighted(stack, wavelength_nm, weights, *, angle_deg=0.0, polarization="unpolarized",
                     reverse=False, thickness_nm=None, extrapolate=False,
                     channels=CHANNELS) -> WeightedSpectrum:
    """Weighted sums over wavelength of a stack's R, T and A, without holding its spectra.

    The same engine as :func:`compute`, but every chunk of the grid is reduced to
    ``channel @ weights`` as soon as it is computed, so memory is bounded by the chunk size
    (:data:`CHUNK_BYTES`) and the size of the answer, whatever the number of thickness sets:
    a 500 × 500 map of luminous transmittance over two layer thicknesses needs a few megabytes
    instead of gigabytes of spectra. Luminous values, CIE XYZ, band averages and detector signals
    are all such sums (see :func:`filmoptic.colorimetry.colour_grid` for colours and luminous
    values by name).

    Parameters
    ----------
    stack, wavelength_nm, angle_deg, polarization, reverse, thickness_nm, extrapolate
        As for :func:`compute`.
    weights : array_like, shape (W,) or (W, *M)
        One weight (or one set of M weights) per wavelength, e.g.
        :func:`filmoptic.colorimetry.luminous_weights` or
        :func:`filmoptic.colorimetry.tristimulus_weights`.
    channels : sequence of str
        Which of ``"R"``, ``"T"``, ``"A"``, ``"A_layers"``, ``"A_substrate"`` to reduce.

    Returns
    -------
    WeightedSpectrum
        The sums, shape ``(*batch, *numpy.shape(angle_deg), *M)``. Equal to
        ``compute(…).R @ weights`` (and so on) to rounding.

    Examples
    --------
    >>> import numpy as np
    >>> wl = np.array([500.0, 600.0])
    >>> full = compute("TiO2 ? / glass 1mm", wl, thickness_nm=[[50.0], [100.0]])
    >>> part = compute_weighted("TiO2 ? / glass 1mm", wl, [0.5, 0.5], thickness_nm=[[50.0], [100.0]])
    >>> bool(np.allclose(part.T, full.T.mean(axis=-1), rtol=0, atol=1e-15)), part.T.shape
    (True, (2,))
    """
    channels = tuple(channels)
    unknown = [c for c in channels if c not in CHANNELS]
    if unknown or not channels:
        raise FilmopticError(f"channels must be some of {', '.join(CHANNELS)}, got {channels!r}")
    job = _Job(stack, wavelength_nm, angle_deg, polarization, reverse, thickness_nm, extrapolate)
    w = np.asarray(weights, dtype=float)
    if w.ndim == 0 or w.shape[0] != job.wl.size:
        raise FilmopticError(
            f"weights need one row per wavelength ({job.wl.size}), got shape {np.shape(weights)}"
        )
    if not np.all(np.isfinite(w)):
        raise FilmopticError("weights must be finite numbers")
    sink = _WeightedSink(job, w.reshape(w.shape[0], -1), channels)
    job.run(sink.take)
    sums = sink.result(w.shape[1:])
    return WeightedSpectrum(wavelength_nm=job.wl, weights=w, angle_deg=job.angle_out, polarization=job.pol,
                            transmission=job.transmission, **sums)


class _Job:
    """One call of the engine: checked inputs, the media's indices, and how the chunks finish."""

    def __init__(self, stack, wavelength_nm, angle_deg, polarization, reverse, thickness_nm, extrapolate):
        if isinstance(stack, str):
            from filmoptic.stack import parse_stack

            stack = parse_stack(stack)
        self.wl = wl = _check_wavelengths(wavelength_nm)
        self.pol = _check_polarization(polarization)
        angles = _check_angles(angle_deg)
        self.angles = angles
        self.angle_out = float(angles) if angles.ndim == 0 else angles

        media, thickness_specs, incoherent = _media_of(stack)
        free_thickness = _free_thickness_columns(stack)
        batch_shape, table = _thickness_table(thickness_specs, free_thickness, thickness_nm, _consumed(stack))

        # Every distinct material is evaluated once over the whole grid.
        cache: dict[int, np.ndarray] = {}
        indices = []
        for material in media:
            key = id(material)
            if key not in cache:
                cache[key] = np.asarray(material.nk(wl, extrapolate=extrapolate), dtype=complex)
            indices.append(cache[key])

        half_space = stack.substrate.thickness_nm is None
        if reverse:
            if half_space:
                _check_entry_through_substrate(stack.substrate, indices[-1], wl)
            indices = indices[::-1]
            table = table[::-1]
            incoherent = incoherent[::-1]
            media = media[::-1]
        indices[0] = _incident_index(media[0], indices[0], angles, wl)
        self.transmission, self.substrate_slab = _substrate_role(indices, half_space, reverse)
        self.indices, self.table, self.incoherent = indices, table, incoherent
        self.batch_shape = batch_shape
        self.batch = math.prod(batch_shape)
        # The work of this call, refused at once when it is past the limit, and charged to the
        # running command's budget.
        points = wl.size * max(self.batch, 1) * max(angles.size, 1)
        check_work(points, len(media) - 1)
        _charge(points, len(media) - 1)
        self.out_shape = batch_shape + angles.shape + wl.shape
        # Per wavelength: where no layer absorbs (all the light lost is then the slab's), and
        # where the substrate slab absorbs at all.
        self.lossless = self.slab_absorbs = None
        if self.substrate_slab is not None:
            lossy = [N.imag > 0 for i, N in enumerate(indices)
                     if 0 < i < len(indices) - 1 and i != self.substrate_slab]
            self.lossless = np.broadcast_to(~np.any(lossy, axis=0), wl.shape)
            self.slab_absorbs = np.broadcast_to(indices[self.substrate_slab].imag > 0, wl.shape)

    @property
    def empty(self) -> bool:
        return self.batch == 0 or self.angles.size == 0

    def run(self, take) -> None:
        """Solve the grid chunk by chunk; ``take(rows, angles, wavelengths, R, T, A, A_layers,
        A_substrate)`` receives each finished chunk (slices and arrays of shape (b, a, w))."""
        if self.empty:
            return

        def finish(bsl, asl, wsl, Rc, Tc, Ac):
            take(bsl, asl, wsl, *self._finish(bsl, asl, wsl, Rc, Tc, Ac))

        _solve(self.indices, self.table, self.incoherent, self.wl, self.angles.reshape(-1), self.pol,
               absorber=self.substrate_slab, sink=finish)

    def rows(self) -> int:
        """Rows the solver produces: the batch, or 1 when no thickness varies across it."""
        return max((len(d) for d in self.table if d is not None), default=1)

    def _finish(self, bsl, asl, wsl, Rc, Tc, Ac):
        """R, T, A, A_layers, A_substrate of one chunk from the solver's R, T and slab absorption."""
        B = self.rows()
        shape = (len(range(*bsl.indices(B))), len(range(*asl.indices(self.angles.size))),
                 len(range(*wsl.indices(self.wl.size))))
        # The solver's arrays are its workspace (reused for the next chunk), or smaller ones
        # that broadcast: either way the chunk gets arrays of its own.
        R = Rc.copy() if Rc.shape == shape else np.array(np.broadcast_to(Rc, shape))
        T = Tc.copy() if Tc.shape == shape else np.array(np.broadcast_to(Tc, shape))
        _check_result(R, T, self.wl[wsl], self.indices[0][wsl] if np.ndim(self.indices[0]) else self.indices[0])
        if self.transmission == "opaque":
            # Everything that enters an absorbing half-space stays there.
            A_substrate, T = T, np.zeros(shape)
        elif Ac is not None:
            A_substrate = np.array(np.broadcast_to(Ac, shape))
            # Where no layer absorbs, all the light lost is the slab's. (The interference term of
            # the waves at the face of an absorbing slab, of order k, would otherwise be left over
            # and credited to lossless layers.)
            A_substrate = np.where(self.lossless[wsl], 1.0 - R - T, A_substrate)
            # A slab without absorption absorbs nothing (not even rounding).
            A_substrate = np.where(self.slab_absorbs[wsl], A_substrate, 0.0)
        else:
            A_substrate = np.zeros(shape)
        A = np.subtract(1.0, R)
        A -= T
        np.clip(A, 0.0, 1.0, out=A)
        np.clip(A_substrate, 0.0, None, out=A_substrate)
        np.minimum(A_substrate, A, out=A_substrate)
        A_layers = np.subtract(A, A_substrate)
        return R, T, A, A_layers, A_substrate


class _SpectraSink:
    """Collects the finished chunks into whole spectra."""

    def __init__(self, job):
        self.job = job
        grid = (job.rows(), job.angles.size, job.wl.size) if not job.empty else None
        self.arrays = None if grid is None else [np.empty(grid) for _ in CHANNELS]

    def take(self, bsl, asl, wsl, *chunk):
        for array, values in zip(self.arrays, chunk):
            array[bsl, asl, wsl] = values

    def result(self):
        job = self.job
        if self.arrays is None:
            return tuple(np.empty(job.out_shape) for _ in CHANNELS)
        out = []
        for array in self.arrays:
            if array.shape[0] != job.batch:
                # No thickness varies across the batch (e.g. K = 0): the same for every member.
                array = np.repeat(array, job.batch, axis=0)
            out.append(array.reshape(job.out_shape))
        return tuple(out)


class _WeightedSink:
    """Reduces every finished chunk to ``channel @ weights`` and adds it up."""

    def __init__(self, job, weights, channels):
        self.job, self.weights = job, weights
        self.wanted = [CHANNELS.index(c) for c in channels]
        rows = job.rows() if not job.empty else 0
        self.sums = {CHANNELS[i]: np.zeros((rows, job.angles.size, weights.shape[1])) for i in self.wanted}

    def take(self, bsl, asl, wsl, *chunk):
        w = self.weights[wsl]
        for i in self.wanted:
            values = chunk[i]
            b, a, n = values.shape
            self.sums[CHANNELS[i]][bsl, asl] += (values.reshape(b * a, n) @ w).reshape(b, a, -1)

    def result(self, tail) -> dict:
        job = self.job
        shape = job.batch_shape + job.angles.shape + tuple(tail)
        out = {}
        for name, array in self.sums.items():
            if job.empty:
                out[name] = np.zeros(shape)
                continue
            if array.shape[0] != job.batch:
                array = np.repeat(array, job.batch, axis=0)
            out[name] = array.reshape(shape)
        return out


def _substrate_role(indices, half_space, reverse):
    """(what T means, index of the substrate slab among the media or None).

    Lit from the front, the substrate is the last medium (a half-space) or the last but one (a
    slab, with the exit medium behind it). Lit from behind, a slab is the first medium after the
    incident one and a half-space is the incident medium itself (no substrate absorption).
    """
    from filmoptic.materials import is_practically_transparent

    if not half_space:
        return "exits", (1 if reverse else len(indices) - 2)
    if reverse or is_practically_transparent(indices[-1]):
        return "enters substrate", None
    return "opaque", None


def compute_indices(indices, thickness_nm, wavelength_nm, *, incoherent=None, angle_deg=0.0,
                    polarization="unpolarized"):
    """R and T of a stack given directly as refractive indices (the engine's raw form).

    Parameters
    ----------
    indices : sequence
        Complex indices N = n + i·k of every medium in the order light meets them: the incident
        medium first, the exit medium last. Each is a scalar or an array of shape ``(W,)``.
    thickness_nm : sequence
        Thicknesses (nm) of the media between the first and the last; each a scalar or an array
        of any batch shape (all batch shapes must broadcast together).
    wavelength_nm : array_like
        Wavelengths in nm, 1-D.
    incoherent : sequence of bool, optional
        Per inner medium: True for a thick slab added in intensity. Default: all coherent.
    angle_deg, polarization
        As for :func:`compute`.

    Returns
    -------
    R, T : numpy.ndarray
        Shape ``(*batch, *numpy.shape(angle_deg), W)``.

    References
    ----------
    Byrnes, "Multilayer optical calculations", arXiv:1603.02720 (2016).

    Examples
    --------
    >>> R, T = compute_indices([1.0, 1.38, 1.52], [550 / 4 / 1.38], [550.0])
    >>> round(float(R[0]), 4)     # quarter-wave MgF2 on glass: ((1.52 − 1.38²)/(1.52 + 1.38²))²
    0.0126
    """
    wl = _check_wavelengths(wavelength_nm)
    pol = _check_polarization(polarization)
    angles = _check_angles(angle_deg)
    try:
        indices = [np.broadcast_to(np.asarray(N, dtype=complex), wl.shape) for N in indices]
    except (TypeError, ValueError):
        raise FilmopticError(f"each index must be a number or have one value per wavelength ({wl.size})") from None
    if any(np.any(N.imag < 0) or np.any(N.real <= 0) or not np.all(np.isfinite(N)) for N in indices):
        raise FilmopticError("indices are written N = n + i·k with n > 0 and k >= 0")
    from filmoptic.materials.base import check_index

    for position, N in enumerate(indices):
        check_index(N, f"index {position + 1}", wl)
    if len(indices) < 2:
        raise FilmopticError("a stack needs at least an incident and an exit medium")
    inner = len(indices) - 2
    if len(thickness_nm) != inner:
        raise FilmopticError(f"expected {inner} thicknesses, got {len(thickness_nm)}")
    incoherent = [False] * inner if incoherent is None else [bool(x) for x in incoherent]
    if len(incoherent) != inner:
        raise FilmopticError(f"expected {inner} coherence flags, got {len(incoherent)}")
    arrays = [np.asarray(d, dtype=float) for d in thickness_nm]
    batch_shape = np.broadcast_shapes(*(a.shape for a in arrays)) if arrays else ()
    for a in arrays:
        _check_thickness_values(a)
    batch = int(np.prod(batch_shape, dtype=np.int64))
    table = [None] + [_column(a, batch_shape, batch) for a in arrays] + [None]
    flags = [False] + incoherent + [False]
    indices[0] = _incident_index("the incident medium", indices[0], angles, wl)
    check_work(wl.size * max(batch, 1) * max(angles.size, 1), len(indices) - 1)
    _charge(wl.size * max(batch, 1) * max(angles.size, 1), len(indices) - 1)
    R, T, _ = _solve(indices, table, flags, wl, angles.reshape(-1), pol)
    _check_result(R, T, wl, indices[0])
    shape = batch_shape + angles.shape + wl.shape
    return R.reshape(shape), T.reshape(shape)


# ----------------------------------------------------------------------------------------------
# Input checks and assembly
# ----------------------------------------------------------------------------------------------
def _check_wavelengths(wavelength_nm) -> np.ndarray:
    from filmoptic.units import WAVELENGTH_RANGE_NM

    try:
        wl = np.atleast_1d(np.asarray(wavelength_nm, dtype=float))
    except (TypeError, ValueError):
        raise FilmopticError("wavelengths must be numbers of nm") from None
    if wl.ndim != 1 or wl.size == 0:
        raise FilmopticError("wavelengths must be a non-empty 1-D list of nm")
    if not np.isfinite(wl).all() or (wl <= 0).any():
        raise FilmopticError("wavelengths must be positive, finite numbers of nm")
    lo, hi = WAVELENGTH_RANGE_NM
    if np.any(wl < lo) or np.any(wl > hi):
        raise FilmopticError(f"wavelengths must lie between {lo:g} nm and {hi:g} nm (1 mm)")
    return wl


def _check_thickness_values(values) -> None:
    """Thicknesses reaching the physics: finite, not negative, at most 1 m (as the parsers allow)."""
    from filmoptic.units import MAX_LENGTH_NM

    if not np.all(np.isfinite(values)) or np.any(values < 0):
        raise FilmopticError("thicknesses must be finite and not negative")
    if np.any(values > MAX_LENGTH_NM):
        raise FilmopticError(f"a thickness of {np.max(values):g} nm is over 1 m; thicknesses are in nm")


def interface_count(stack) -> int:
    """How many interfaces light crosses in ``stack`` (ambient to exit medium): the engine's work
    per grid point is proportional to it.

    Examples
    --------
    >>> from filmoptic.stack import parse_stack
    >>> interface_count(parse_stack("[n=2.3 55nm / n=1.46 92nm]x4 / n=1.52 1mm"))
    10
    """
    return len(stack.layers) + (2 if stack.substrate.thickness_nm is not None else 1)


# The fixed cost of one engine call per interface, counted in grid points (measured: about 50 µs
# per layer against about 30 ns per layer and grid point): charged with every call, so that a job
# of many small calls on a long stack is counted fairly.
_CALL_POINTS = 2000


def check_work(points: int, interfaces: int, request: str = "", fix: str = "") -> None:
    """Refuse at once a calculation too large to answer within seconds.

    The work is ``points × interfaces`` (grid points: wavelengths × thickness sets × angles), bounded
    by :data:`filmoptic.limits.WORK`; :func:`compute` checks every call, and commands that split a
    large job into several calls check the whole job first with this function.
    """
    from filmoptic.limits import WORK

    points, interfaces = int(points), max(int(interfaces), 1)
    request = request or (f"{points:,} grid points (wavelengths × thickness sets × angles) × "
                          f"{interfaces} interfaces").replace(",", " ")
    WORK.check(points * interfaces, request, fix or "use fewer wavelengths, thicknesses or layers")


def _charge(points: int, interfaces: int) -> None:
    """Count one call against the running command's work budget (:func:`filmoptic.limits.work_budget`)."""
    from filmoptic.limits import charge_work

    charge_work((points + _CALL_POINTS) * max(interfaces, 1))


def _check_result(R, T, wl, N0=1.0) -> None:
    """R and T are fractions of the incident light: finite and within [0, 1] (a last guard; the
    inputs are checked so that this never fails).

    An incident medium that absorbs a little (a glass half-space lit from behind, water in the
    near infrared; k/n up to :data:`filmoptic.materials.TRANSPARENT_K_OVER_N`) keeps its k at
    normal incidence, as tmm does. The incident and reflected waves then interfere in the energy
    flow, and R + T exceeds 1 - A by up to 2·(k0/n0)·|r| (Born & Wolf, Principles of Optics,
    §1.5.2, the Poynting vector of two waves in an absorbing medium): that much is physics, not
    lost precision, and is allowed."""
    tolerance = 1e-9
    N0 = np.asarray(N0, dtype=complex)
    interference = 2.0 * np.abs(N0.imag) / np.abs(N0.real) * np.sqrt(np.clip(R, 0.0, None))
    good = (np.isfinite(R) & np.isfinite(T) & (R >= -tolerance) & (T >= -tolerance)
            & (R + T <= 1.0 + 1e-6 + interference))
    if not np.all(good):
        where = float(np.broadcast_to(wl, R.shape)[~good].flat[0])
        raise FilmopticError(
            f"the calculation lost precision at {where:g} nm (extreme indices, thicknesses or "
            "angles); check the stack's numbers, and please report the stack if they are sensible"
        )


def _check_polarization(polarization) -> str:
    pol = _ALIASES.get(str(polarization).strip().lower())
    if pol is None:
        raise FilmopticError(f"polarization must be s, p or unpolarized, got {polarization!r}")
    return pol


def _check_angles(angle_deg) -> np.ndarray:
    try:
        angles = np.asarray(angle_deg, dtype=float)
    except (TypeError, ValueError):
        raise FilmopticError(f"angle of incidence must be a number of degrees, got {angle_deg!r}") from None
    from filmoptic.units import check_angles_deg

    check_angles_deg(angles)
    return angles


def _incident_index(material, N0, angles, wl) -> np.ndarray:
    """The incident medium's index, checked: the light must arrive through a practically
    transparent medium (:func:`filmoptic.materials.is_practically_transparent`, k/n ≤ 1e-4).

    In an absorbing medium the incident, reflected and transmitted waves interfere in the
    energy flow, so R and T are not defined in the usual way (and R may exceed 1), and at an angle
    n0·sin θ0 would not be real (tmm requires the same). A practically transparent medium such as
    water keeps its tiny k at normal incidence; at an angle the k is dropped, which changes R and
    T by less than k/n.
    """
    from filmoptic.materials import TRANSPARENT_K_OVER_N, is_practically_transparent

    if not (N0.imag > 0).any():
        return N0
    if is_practically_transparent(N0):
        return N0.real.astype(complex) if np.any(angles > 0) else N0
    worst = int(np.argmax(N0.imag / N0.real))
    name = material if isinstance(material, str) else getattr(material, "label", material)
    raise FilmopticError(
        f"the light arrives through {name}, which absorbs (k = {N0.imag[worst]:.3g}, n = "
        f"{N0.real[worst]:.3g} at {wl[worst]:g} nm): R and T are defined only for light arriving "
        f"through a practically transparent medium (k/n at most {TRANSPARENT_K_OVER_N:g}), such as "
        "air, water or glass; choose another ambient (--ambient)"
    )


def _check_entry_through_substrate(substrate, N, wl) -> None:
    """Light sent in from the back of a half-space substrate must have come through it.

    A half-space has no back surface: lighting the part "from behind" means the light crossed an
    unbounded stretch of the substrate, which only a practically transparent one (the same k/n
    rule as for an incident medium) lets through. Through a metal or silicon nothing arrives.
    """
    from filmoptic.materials import is_practically_transparent

    if is_practically_transparent(N):
        return
    text = getattr(substrate, "text", "") or getattr(substrate.material, "label", substrate.material)
    worst = int(np.argmax(N.imag / N.real))
    raise FilmopticError(
        f"reverse: light would have to arrive through {text}, an absorbing half-space substrate "
        f"(k = {N.imag[worst]:.2g} at {wl[worst]:g} nm); give it a thickness in mm "
        f"(e.g. '{text} 0.5mm') to light the part from behind"
    )


def _media_of(stack):
    """Materials, thickness specifications and incoherence flags in the order light meets them."""
    media = [stack.ambient]
    specs = [None]
    incoherent = [False]
    for layer in stack.layers:
        media.append(layer.material)
        # A metal under its native oxide ('Al 10nm + 2nm oxide') is thinner than deposited.
        specs.append(layer.effective_nm() if hasattr(layer, "effective_nm") else layer.thickness_nm)
        incoherent.append(bool(layer.thick))
    substrate = stack.substrate
    media.append(substrate.material)
    if substrate.thickness_nm is None:
        specs.append(None)
        incoherent.append(False)
    else:
        specs.append(substrate.thickness_nm)
        incoherent.append(True)
        media.append(stack.exit_medium)
        specs.append(None)
        incoherent.append(False)
    return media, specs, incoherent


def _free_thickness_columns(stack) -> list:
    """For each inner medium, the column of ``thickness_nm`` supplying its thickness (or None)."""
    columns = getattr(stack, "thickness_columns", None)
    if columns is None:
        return [None] * (len(stack.layers) + 1)
    return list(columns())


def _consumed(stack) -> list:
    """For each inner medium, the metal consumed by a native oxide (nm) from a free thickness."""
    return [getattr(layer, "consumed_nm", 0.0) for layer in (*stack.layers, stack.substrate)]


def _thickness_table(specs, columns, thickness_nm, consumed=None):
    """Per medium: None (semi-infinite) or an array of shape (B,) or (1,) of thicknesses.

    ``consumed`` (per inner medium) is taken off a free thickness: the unknown is the metal
    deposited, the layer what its native oxide leaves of it (not below 0).
    """
    from filmoptic.params import is_free

    n_free = 1 + max((c for c in columns if c is not None), default=-1)
    if thickness_nm is None:
        if n_free:
            raise FilmopticError(
                f"the stack has {n_free} unknown thickness(es); give them numbers "
                "(thickness_nm=… or Stack.bind) before computing"
            )
        values = np.zeros((1, 0))
        batch_shape = ()
    else:
        values = np.asarray(thickness_nm, dtype=float)
        if values.ndim == 0 or values.shape[-1] != n_free:
            raise FilmopticError(
                f"thickness_nm must have shape (..., {n_free}) for the stack's {n_free} free "
                f"thickness(es), got shape {np.shape(thickness_nm)}"
            )
        _check_thickness_values(values)
        batch_shape = values.shape[:-1]
        values = values.reshape(math.prod(batch_shape), n_free)

    table = []
    inner = iter(columns)
    used = iter(consumed or ())
    for i, spec in enumerate(specs):
        if i == 0 or spec is None:
            table.append(None)
            continue
        column = next(inner, None)
        taken = next(used, 0.0)
        if is_free(spec):
            if column is None:
                raise FilmopticError("the stack has an unknown thickness; give it a number first")
            table.append(np.maximum(values[:, column] - taken, 0.0) if taken else values[:, column])
        else:
            table.append(np.array([float(spec)]))
    return batch_shape, table


def _column(a: np.ndarray, batch_shape, batch: int) -> np.ndarray:
    if a.ndim == 0:
        return a.reshape(1)
    return np.broadcast_to(a, batch_shape).reshape(batch)


# ----------------------------------------------------------------------------------------------
# The solver
# ----------------------------------------------------------------------------------------------
def _forward_normal(N: np.ndarray, beta2: np.ndarray) -> np.ndarray:
    """``n·cos θ`` of the forward wave: decaying (Im ≥ 0), or carrying power forward (Re ≥ 0).

    With N = n + i·k (n, k ≥ 0) the radicand has a non-negative imaginary part, so the
    principal square root already lies on the forward branch; a signed zero is corrected.
    """
    q = np.sqrt(N * N - beta2)
    return np.where((q.imag < 0) | ((q.imag == 0) & (q.real < 0)), -q, q)


def _interface(pol: str, Ni, Nf, qi, qf, ci, cf):
    """Fresnel amplitudes r, t from medium i into medium f (Born & Wolf §1.5; tmm's form)."""
    if pol == "s":
        den = qi + qf
        return (qi - qf) / den, 2.0 * qi / den
    den = Nf * ci + Ni * cf
    return (Nf * ci - Ni * cf) / den, 2.0 * Ni * ci / den


def _power_ratio(pol: str, Ni, Nf, qi, qf, ci, cf):
    """Factor turning |t|² into transmitted power from medium i into medium f (Byrnes eq. 21)."""
    if pol == "s":
        num, den = qf.real, qi.real
    else:
        num, den = (Nf * np.conj(cf)).real, (Ni * np.conj(ci)).real
    # A slab that is evanescent at this angle carries no power (its P is 0 as well).
    return np.divide(num, den, out=np.zeros(np.broadcast(num, den).shape), where=den != 0)


# Smallest exp(2i·kz·d) kept, as a natural logarithm (see _Optics.round_trip).
_MIN_LOG_ROUND_TRIP = 200.0
# Extinction coefficients below this are zero (an absorption length of 10 km); tables that
# interpolate down to 1e-200 would otherwise drive the arithmetic into slow subnormal numbers.
_NEGLIGIBLE_K = 1e-18


# exp(i·φ) for real φ, several times faster than numpy's complex exp: Cody–Waite reduction by
# π/2 (W. J. Cody and W. Waite, *Software Manual for the Elementary Functions*, Prentice-Hall,
# 1980), then sin on [−π/4, π/4] by the minimax polynomial of fdlibm's k_sin.c (Sun
# Microsystems, 1993; error below 2**-58) and cos = √(1 − sin²), which keeps full precision
# there because cos >= 0.7. π/2 is split as in fdlibm so that k·_PIO2_HI is exact.
_PIO2_HI = 1.57079632673412561417e+00
_PIO2_LO = 6.07710050650619224932e-11
_CIS_MAX_PHASE = 1.0e6          # k·_PIO2_HI stays exact below 2**20 quadrants
_SIN_MINIMAX = (-1.66666666666666324348e-01, 8.33333333332248946124e-03,
                -1.98412698298579493134e-04, 2.75573137070700676789e-06,
                -2.50507602534068634195e-08, 1.58969099521155010221e-10)
_QUADRANT = np.array([1.0, 1.0j, -1.0, -1.0j])        # i**k


def _cis(phase: np.ndarray, out: np.ndarray, workspace, scale=None) -> np.ndarray:
    """out ← scale·exp(i·phase) for real |phase| < 1e6 (relative error about 3e-16)."""
    shape = phase.shape
    k = np.multiply(phase, 2.0 / math.pi, out=workspace.get("cis_k", shape, float))
    np.rint(k, out=k)
    r = np.multiply(k, _PIO2_HI, out=workspace.get("cis_r", shape, float))
    np.subtract(phase, r, out=r)
    r2 = np.multiply(k, _PIO2_LO, out=workspace.get("cis_r2", shape, float))
    r -= r2
    np.multiply(r, r, out=r2)
    poly = np.multiply(r2, _SIN_MINIMAX[-1], out=workspace.get("cis_p", shape, float))
    poly += _SIN_MINIMAX[-2]
    for coefficient in _SIN_MINIMAX[-3::-1]:
        poly *= r2
        poly += coefficient
    poly *= r2
    poly *= r
    poly += r                                     # sin r
    np.multiply(poly, poly, out=r2)
    np.subtract(1.0, r2, out=r2)
    if scale is None:
        np.copyto(out.imag, poly)
        np.sqrt(r2, out=out.real)                 # cos r
    else:
        np.multiply(poly, scale, out=out.imag)
        np.sqrt(r2, out=r2)
        np.multiply(r2, scale, out=out.real)
    quadrant = workspace.get("cis_q", shape, np.int64)
    np.copyto(quadrant, k, casting="unsafe")
    quadrant &= 3
    out *= _QUADRANT.take(quadrant)
    return out


def _flush_tiny_k(N: np.ndarray) -> np.ndarray:
    tiny = np.abs(N.imag) < _NEGLIGIBLE_K
    if (tiny & (N.imag != 0)).any():
        N = np.where(tiny, N.real + 0j, N)
    return N


def _abs2(z: np.ndarray) -> np.ndarray:
    return z.real * z.real + z.imag * z.imag


def _reciprocal(z: np.ndarray) -> np.ndarray:
    # conj(z)/|z|² in real arithmetic: several times faster than numpy's complex division.
    out = np.conj(z)
    out *= 1.0 / _abs2(z)
    return out


def _solve(indices, table, incoherent, wl, angles_deg, pol, absorber=None, sink=None):
    """R, T and the absorptance inside medium ``absorber`` (a thick slab; None: not wanted),
    shape (B, A, W), for media ``indices`` (first and last semi-infinite).

    With ``sink``, nothing is collected: ``sink(rows, angles, wavelengths, R, T, A_slab)`` gets
    every chunk as it is solved (its arrays are reused for the next chunk) and None is returned.
    """
    B = max((len(d) for d in table if d is not None), default=1)
    A = angles_deg.size
    W = wl.size
    if sink is None:
        R = np.empty((B, A, W))
        T = np.empty((B, A, W))
        A_slab = None if absorber is None else np.empty((B, A, W))

        def sink(bsl, asl, wsl, Rc, Tc, Ac):
            R[bsl, asl, wsl] = Rc
            T[bsl, asl, wsl] = Tc
            if A_slab is not None:
                A_slab[bsl, asl, wsl] = Ac
    else:
        R = None
    # At normal incidence s and p are the same light (their reflection coefficients differ only
    # in sign): one of them gives the unpolarised answer at half the work.
    pols = (("s", "p") if np.any(angles_deg) else ("s",)) if pol == "unpolarized" else (pol,)

    ends = (0, len(indices) - 1)
    incoherent_media = [i for i, flag in enumerate(incoherent) if flag or i in ends]
    packets = list(zip(incoherent_media[:-1], incoherent_media[1:]))

    # Chunks: an (angle × wavelength) plane small enough that the per-medium arrays fit the
    # budget, then batch rows, kept near cache size. Only loops over chunks and layers run in
    # Python; everything inside a chunk is one numpy pass.
    distinct = len({id(N) for N in indices})
    per_point = _COMPLEX_BYTES * (16 * distinct + _WORKING_ARRAYS)
    w_chunk, a_chunk = W, A
    while w_chunk > 1 and a_chunk * w_chunk * per_point > CHUNK_BYTES:
        w_chunk = (w_chunk + 1) // 2
    while a_chunk > 1 and a_chunk * w_chunk * per_point > CHUNK_BYTES:
        a_chunk = (a_chunk + 1) // 2
    plane = a_chunk * w_chunk
    b_chunk = max(1, min(B, CHUNK_BYTES // (_COMPLEX_BYTES * _WORKING_ARRAYS * plane),
                         max(1, _CACHE_POINTS // plane)))

    workspace = _thread_workspace()
    sin0 = np.sin(np.deg2rad(angles_deg))[:, None]
    with np.errstate(under="ignore", divide="ignore"):
        for a0 in range(0, A, a_chunk):
            asl = slice(a0, min(A, a0 + a_chunk))
            for w0 in range(0, W, w_chunk):
                wsl = slice(w0, min(W, w0 + w_chunk))
                optics = _Optics(indices, wsl, wl, sin0[asl])
                for b0 in range(0, B, b_chunk):
                    bsl = slice(b0, min(B, b0 + b_chunk))
                    thick = [None if d is None else (d[bsl] if d.size > 1 else d)[:, None, None]
                             for d in table]
                    Rc, Tc, Ac = _solve_chunk(pols, packets, optics, thick, workspace, absorber)
                    sink(bsl, asl, wsl, Rc, Tc, Ac)
    return None if R is None else (R, T, A_slab)


_LOCAL = threading.local()


def _thread_workspace() -> "_Workspace":
    # Kept between calls (a few MB at most): fresh buffers would cost page faults every call.
    workspace = getattr(_LOCAL, "workspace", None)
    if workspace is None:
        workspace = _LOCAL.workspace = _Workspace()
    return workspace


class _Workspace:
    """Reusable chunk-sized buffers: fresh large arrays cost page faults on every chunk."""

    def __init__(self):
        self._buffers = {}

    def get(self, name, shape, dtype=complex) -> np.ndarray:
        size = math.prod(shape)
        buf = self._buffers.get(name)
        if buf is None or buf.size < size or buf.dtype != dtype:
            buf = np.empty(size, dtype=dtype)
            self._buffers[name] = buf
        return buf[:size].reshape(shape)


class _Medium:
    """One distinct medium over a wavelength chunk: arrays of shape (A, w)."""

    def __init__(self, N, beta2, lam):
        self.N = N
        self.q = _forward_normal(N, beta2)                 # n·cos θ on the forward branch
        self.c = self.q / N                                # cos θ (complex)
        self.i2kz = 4j * np.pi * self.q / lam              # 2i · normal wave-vector component
        self.i2kz_real = np.ascontiguousarray(self.i2kz.real)
        self.i2kz_imag = np.ascontiguousarray(self.i2kz.imag)
        self.lossy = bool(self.i2kz_real.any())


class _Optics:
    """Per-medium quantities of one wavelength chunk, shape (A, w).

    Media given by the same index array (the repeats of a group) share one :class:`_Medium`
    and their interface coefficients: a 10 000-layer mirror has two distinct interfaces.
    """

    def __init__(self, indices, wavelength_slice, wl, sin0):
        lam = wl[wavelength_slice][None, :]
        distinct = {}
        self.media = []
        beta2 = None
        for N in indices:
            if id(N) not in distinct:
                local = _flush_tiny_k(N[wavelength_slice][None, :])
                if beta2 is None:
                    # (n0 sin θ0)², conserved across the stack (Snell's law)
                    beta2 = (local.real * sin0) ** 2
                distinct[id(N)] = _Medium(local, beta2, lam)
            self.media.append(distinct[id(N)])
        self._fresnel = {}
        self._log_t2 = {}

    def interface(self, pol, i, f):
        """Fresnel r, t from medium i into medium f (cached per distinct pair)."""
        a, b = self.media[i], self.media[f]
        key = (pol, id(a), id(b))
        if key not in self._fresnel:
            self._fresnel[key] = _interface(pol, a.N, b.N, a.q, b.q, a.c, b.c)
        return self._fresnel[key]

    def log_t2(self, pol, i, f):
        """log|t|² of the interface from medium i into medium f."""
        key = (pol, id(self.media[i]), id(self.media[f]))
        if key not in self._log_t2:
            self._log_t2[key] = np.log(_abs2(self.interface(pol, i, f)[1]))
        return self._log_t2[key]

    def power_ratio(self, pol, i, f):
        a, b = self.media[i], self.media[f]
        return _power_ratio(pol, a.N, b.N, a.q, b.q, a.c, b.c)

    def round_trip(self, i, d, out, workspace, log_decay=None):
        """exp(2i·kz·d), |…| <= 1 since Im(kz) >= 0: thick absorbers underflow, never overflow.

        ``log_decay`` is log|exp(2i·kz·d)| = −2·Im(kz)·d when the medium absorbs (it is
        overwritten).
        """
        m = self.media[i]
        if log_decay is not None:
            # Below e^-200 a round trip is zero for every purpose; stopping there keeps the
            # arithmetic out of subnormal numbers, which are many times slower.
            np.maximum(log_decay, -_MIN_LOG_ROUND_TRIP, out=log_decay)
        if np.max(np.abs(m.i2kz_imag)) * np.max(d) > _CIS_MAX_PHASE:
            np.multiply(m.i2kz_imag, d, out=out.imag)
            out.real[...] = 0.0 if log_decay is None else log_decay
            return np.exp(out, out=out)
        phase = np.multiply(m.i2kz_imag, d, out=workspace.get("phase", out.shape, float))
        scale = None if log_decay is None else np.exp(log_decay, out=log_decay)
        return _cis(phase, out, workspace, scale)

    def slab_pass(self, i, d):
        """Single-pass intensity transmittance of an incoherent slab (Beer–Lambert at angle)."""
        return np.exp(self.media[i].i2kz_real * d)        # Re(2i·kz) = −2·Im(kz) <= 0


def _solve_chunk(pols, packets, optics, thick, workspace, absorber=None):
    """Intensity R, T (averaged over ``pols``) for one chunk, and the light absorbed inside the
    incoherent medium ``absorber`` (a substrate slab), or None."""
    need_back = len(packets) > 1
    per_packet = [
        _packet_intensities(pols, a, b, optics, thick, need_back and k < len(packets) - 1,
                            workspace, k)
        for k, (a, b) in enumerate(packets)
    ]
    if len(packets) == 1:
        # The usual case (no thick slab): straight from the packet, averaged in place.
        (R_sum, T_sum, _, _), *others = per_packet[0]
        for Rp, Tp, _, _ in others:
            R_sum += Rp
            T_sum += Tp
            R_sum *= 0.5
            T_sum *= 0.5
        return R_sum, T_sum, None
    R_sum = T_sum = A_sum = 0.0
    for p in range(len(pols)):
        # Combine packets and slabs from the back (intensity recursion; Byrnes 2016 §6,
        # Katsidis & Siapkas 2002): never divides by a vanishing single-pass transmittance.
        Rf, Tf, _, _ = per_packet[-1][p]
        R_tot, T_tot = Rf, Tf
        for k in range(len(packets) - 2, -1, -1):
            Rf, Tf, Rb, Tb = per_packet[k][p]
            slab = packets[k][1]
            P = optics.slab_pass(slab, thick[slab])
            if slab == absorber:
                A_sum = A_sum + _slab_absorptance(per_packet, packets, k, p, P, R_tot, optics, thick)
            X = P * P * R_tot
            inv = 1.0 / (1.0 - Rb * X)
            T_tot = Tf * P * T_tot * inv
            R_tot = Rf + Tf * Tb * X * inv
        R_sum = R_sum + R_tot
        T_sum = T_sum + T_tot
    if absorber is None:
        A_sum = None
    if len(pols) == 1:
        return R_sum, T_sum, A_sum
    return 0.5 * R_sum, 0.5 * T_sum, (None if A_sum is None else 0.5 * A_sum)


def _slab_absorptance(per_packet, packets, k, p, P, R_back, optics, thick):
    """Light absorbed inside the slab behind packet ``k`` (one polarisation).

    Everything in front of the slab is combined from the front into its transmittance into the
    slab, T_F, and its reflectance seen from inside the slab, R_F; ``R_back`` is the reflectance
    of everything behind the slab seen from inside it, and ``P`` the slab's single-pass
    transmittance. The forward intensity at the slab's front face sums the multiple reflections,
    I = T_F / (1 − R_F·P²·R_back); each forward pass absorbs I·(1 − P) and each backward pass
    I·P·R_back·(1 − P) (intensity bookkeeping of Katsidis & Siapkas 2002; Byrnes 2016 §6).
    """
    _, T_F, R_F, _ = per_packet[0][p]
    for m in range(1, k + 1):
        # Front part so far, a slab, then packet m: the same intensity combination, from the front.
        _, Tf2, Rb2, Tb2 = per_packet[m][p]
        Rf2 = per_packet[m][p][0]
        Q = optics.slab_pass(packets[m][0], thick[packets[m][0]])
        inv = 1.0 / (1.0 - R_F * Q * Q * Rf2)
        R_F = Rb2 + Tb2 * Tf2 * Q * Q * R_F * inv
        T_F = T_F * Q * Tf2 * inv
    forward = T_F / (1.0 - R_F * P * P * R_back)
    return forward * (1.0 - P) * (1.0 + P * R_back)


#: Layers multiplied into a running product before it is rescaled.
_RENORMALISE_EVERY = 16


def _packet_intensities(pols, a, b, optics, thick, back, workspace, packet=0):
    """Per polarisation: (R, T) from the front and, if ``back``, (R, T) from the back.

    The packet is the incoherent medium ``a``, coherent layers ``a+1 … b-1`` and the incoherent
    medium ``b``. Its characteristic (transfer) matrix is the product, front to back, of
    ``(1/t_j)·diag(exp(−iδ_j), exp(iδ_j))·[[1, r_j], [r_j, 1]]`` (Byrnes 2016 eq. 11; Macleod
    ch. 2). Each factor is multiplied by ``t_j·exp(iδ_j)``, which leaves
    ``N_j = [[1, r_j], [r_j·e2_j, e2_j]]`` with ``e2_j = exp(2iδ_j)``, ``|e2_j| <= 1``: nothing
    overflows however thick or absorbing a layer is. The scale taken out only matters for the
    transmission amplitudes, ``t = Π t_j · Π exp(iδ_j) / M00`` (from the back:
    ``Π t'_j · Π exp(iδ_j) / M00``), and only their magnitudes are needed, kept as sums of
    logarithms.

    Only the first column of M is needed for light from the front (``r = M10/M00``), so the
    product is applied to the vector ``(1, 0)`` from the back of the packet to the front
    (three multiplications per layer); light from the back needs the second column as well
    (``r' = −M01/M00``). The vectors are rescaled every few layers so that long stacks
    (thousands of layers) stay in range; layers of fixed thickness in front of a varying one
    are first multiplied together at (angle, wavelength) size.
    """
    if b == a + 1:
        return [_bare_interface(pol, a, b, optics, back) for pol in pols]
    chains = [_Chain(pol, a, b, optics, back, workspace, f"{packet}.{k}") for k, pol in enumerate(pols)]
    big = False
    pending = []                       # fixed layers in front of a varying one, not yet applied
    loss_small = 0.0                   # log|Π exp(iδ)|² of fixed layers, (1, A, w)
    loss_big = None                    # … of varying layers, (b, A, w)
    for j in range(b - 1, a, -1):
        d = thick[j]
        varying = d.shape[0] > 1
        medium = optics.media[j]
        shape = (d.shape[0],) + medium.q.shape
        scratch = workspace if varying else _Workspace()
        log_decay = None
        if medium.lossy:
            # log|exp(iδ)|² = −2·Im(kz)·d: the layer's share of the transmission amplitude.
            log_decay = np.multiply(medium.i2kz_real, d, out=scratch.get("decay", shape, float))
            if not varying:
                loss_small = loss_small + log_decay
            elif loss_big is None:
                loss_big = workspace.get("loss", shape, float)
                loss_big[...] = log_decay
            else:
                loss_big += log_decay
        e2 = optics.round_trip(j, d, scratch.get("e2", shape), scratch, log_decay)
        if not varying and not big:
            for chain in chains:
                chain.apply_layer(j, e2)
        elif not varying:
            pending.append((j, e2))
            if len(pending) >= _RENORMALISE_EVERY:
                for chain in chains:
                    chain.apply_group(pending)
                pending = []
        else:
            if pending:
                for chain in chains:
                    chain.apply_group(pending)
                pending = []
            if not big:
                big = True
                for chain in chains:
                    chain.apply_layer_expanding(j, e2)
            else:
                for chain in chains:
                    chain.apply_layer(j, e2)
        for chain in chains:
            chain.maybe_rescale()
    if pending:
        for chain in chains:
            chain.apply_group(pending)
    # log|Π exp(iδ)|², shared by the polarisations.
    if loss_big is None:
        loss_log = loss_small
    else:
        if np.ndim(loss_small):
            loss_big += loss_small
        loss_log = loss_big
    if any(np.ndim(chain.log_scale) for chain in chains):
        # Rescaled (long) packets: add the logarithms before exponentiating, so that a large
        # rescaling never meets a vanishing loss or transmission factor as inf·0.
        return [chain.intensities(log_loss=chain.log_scale + loss_log) for chain in chains]
    loss_factor = np.exp(loss_log, out=loss_log) if loss_big is not None else np.exp(loss_log)
    return [chain.intensities(loss_factor) for chain in chains]


def _bare_interface(pol, a, b, optics, back):
    r, t = optics.interface(pol, a, b)
    Rf = _abs2(r)
    Tf = _abs2(t) * optics.power_ratio(pol, a, b)
    if not back:
        return Rf, Tf, None, None
    t_back = optics.interface(pol, b, a)[1]
    return Rf, Tf, Rf, _abs2(t_back) * optics.power_ratio(pol, b, a)


class _Chain:
    """Columns of a packet's rescaled characteristic matrix, built from the back, one polarisation."""

    def __init__(self, pol, a, b, optics, back, workspace, slot):
        self.pol, self.a, self.b, self.optics, self.back = pol, a, b, optics, back
        self.workspace, self.slot = workspace, slot
        shape = (1,) + optics.media[a].q.shape  # a batch axis of one until a thickness varies
        # First column (applied to (1, 0)) and, for light from the back, the second (0, 1).
        self.cols = [[np.ones(shape, complex), np.zeros(shape, complex)]]
        if back:
            self.cols.append([np.zeros(shape, complex), np.ones(shape, complex)])
        self.tmp = [np.empty(shape, complex), np.empty(shape, complex)]
        # log|Π t|² from the front and from the back (every interface of the packet).
        log_t2 = log_t2_back = 0.0
        for j in range(a, b):
            log_t2 = log_t2 + optics.log_t2(pol, j, j + 1)
            if back:
                log_t2_back = log_t2_back + optics.log_t2(pol, j + 1, j)
        self.log_t2, self.log_t2_back = log_t2, log_t2_back
        self.log_scale = 0.0
        self.count = 0

    def apply_layer(self, j, e2):
        """x ← [[1, r], [r·e2, e2]]·x in place, r the interface behind layer j."""
        r = self.optics.interface(self.pol, j, j + 1)[0]
        for x in self.cols:
            _apply_layer(x, x, r, e2, self.tmp)
        self.count += 1

    def apply_layer_expanding(self, j, e2):
        """As :meth:`apply_layer`, the first time the batch axis grows: into chunk buffers."""
        r = self.optics.interface(self.pol, j, j + 1)[0]
        shape = e2.shape
        self.tmp = [self.workspace.get(f"tmp{k}", shape) for k in range(2)]
        new = []
        for c, x in enumerate(self.cols):
            out = [self.workspace.get(f"x{self.slot}{c}{k}", shape) for k in range(2)]
            _apply_layer(x, out, r, e2, self.tmp)
            new.append(out)
        self.cols = new
        self.count += 1

    def apply_group(self, pending):
        """Apply fixed layers (given back to front), multiplied together at small size first."""
        if len(pending) == 1:
            self.apply_layer(*pending[0])
            return
        s00 = s11 = 1.0
        s01 = s10 = 0.0
        for j, e2 in pending:
            r = self.optics.interface(self.pol, j, j + 1)[0]
            # S ← [[1, r], [r·e2, e2]]·S
            s00, s01, s10, s11 = (s00 + r * s10, s01 + r * s11,
                                  e2 * (r * s00 + s10), e2 * (r * s01 + s11))
        for x in self.cols:
            x0, x1 = x
            new0 = s00 * x0 + s01 * x1
            x1 *= s11
            x1 += s10 * x0
            x0[...] = new0
        self.count += len(pending)

    def maybe_rescale(self):
        if self.count < _RENORMALISE_EVERY:
            return
        inv = _reciprocal(self.cols[0][0])
        for x in self.cols:
            x[0] *= inv
            x[1] *= inv
        self.log_scale = self.log_scale + np.log(_abs2(inv))
        self.count = 0

    def _buffer(self, name, shape, dtype=complex):
        return self.workspace.get(f"{name}{self.slot}", shape, dtype)

    def _front(self, x0, x1, name):
        """Apply the front interface [[1, r0], [r0, 1]] to a column: (x0 + r0·x1, r0·x0 + x1)."""
        r0 = self.optics.interface(self.pol, self.a, self.a + 1)[0]
        shape = np.broadcast_shapes(x0.shape, r0.shape)
        top = np.multiply(x1, r0, out=self._buffer(f"{name}top", shape))
        top += x0
        bottom = np.multiply(x0, r0, out=self._buffer(f"{name}bottom", shape))
        bottom += x1
        return top, bottom

    def _abs2(self, z, name):
        out = np.multiply(z.real, z.real, out=self._buffer(name, z.shape, float))
        square = np.multiply(z.imag, z.imag, out=self.workspace.get("square", z.shape, float))
        out += square
        return out

    def intensities(self, loss_factor=None, *, log_loss=None):
        """R, T (and from the back) from the finished columns.

        ``loss_factor`` is |Π exp(iδ)|² times this chain's rescaling (if any); or ``log_loss``
        its logarithm, which is added to log|Π t_j|² before exponentiating (a long packet's
        rescaling can pass e^709 while |Π t_j|² passes e^-745: their product is finite).
        """
        m00, m10 = self._front(*self.cols[0], "c0")
        inv2 = self._abs2(m00, "inv2")
        np.divide(1.0, inv2, out=inv2)
        Rf = self._abs2(m10, "Rf")
        Rf *= inv2
        Rb = None
        if self.back:
            m01, _ = self._front(*self.cols[1], "c1")
            Rb = self._abs2(m01, "Rb")
            Rb *= inv2
        # |t|²·(power factor) = |Π t_j|²·|Π exp(iδ_j)|²·(rescaling)/|M00|²·(power factor); the
        # factors of (angle, wavelength) size are combined before touching the batch.
        ratio_front = self.optics.power_ratio(self.pol, self.a, self.b)
        if log_loss is not None:
            Tf = np.multiply(inv2, np.exp(log_loss + self.log_t2), out=self._buffer("Tf", inv2.shape, float))
            Tf *= ratio_front
            if not self.back:
                return Rf, Tf, None, None
            Tb = inv2 * np.exp(log_loss + self.log_t2_back)
            Tb *= self.optics.power_ratio(self.pol, self.b, self.a)
            return Rf, Tf, Rb, Tb
        inv2 *= loss_factor
        front = np.exp(self.log_t2) * ratio_front
        Tf = np.multiply(inv2, front, out=self._buffer("Tf", inv2.shape, float))
        if not self.back:
            return Rf, Tf, None, None
        Tb = inv2 * (np.exp(self.log_t2_back) * self.optics.power_ratio(self.pol, self.b, self.a))
        return Rf, Tf, Rb, Tb


def _apply_layer(x, out, r, e2, tmp):
    """out ← [[1, r], [r·e2, e2]]·x; ``out`` may be ``x`` itself (in place)."""
    x0, x1 = x
    o0, o1 = out
    t0, t1 = tmp
    np.multiply(x1, r, out=t0)         # r·x1
    np.multiply(x0, r, out=t1)         # r·x0
    t1 += x1
    np.multiply(t1, e2, out=o1)        # o1 = e2·(r·x0 + x1)
    np.add(x0, t0, out=o0)             # o0 = x0 + r·x1
