"""Figures of spectra: reflectance, transmittance and absorptance against wavelength."""

from __future__ import annotations

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["plot_spectrum", "plot_spectra", "percent_limits", "PERCENT_AXIS"]

#: What the vertical axis of a spectrum plot shows.
PERCENT_AXIS = "share of the incident light (%)"


def percent_limits(curves_percent, percent_range=None) -> tuple[float, float]:
    """Vertical limits of a spectrum plot, in percent.

    ``None`` gives the whole scale (a little beyond 0–100 so that curves at the ends stay visible);
    ``"auto"`` runs from 0 to a round value just above the highest curve (a semi-mirror's 20–40 %
    then fills the plot); ``(low, high)`` is taken as given.

    Examples
    --------
    >>> percent_limits([[12.0, 31.5, 28.0]], "auto")
    (0.0, 35.0)
    >>> percent_limits([[1.0, 99.0]])
    (-2.0, 102.0)
    """
    if percent_range is None:
        return -2.0, 102.0
    if isinstance(percent_range, str):
        top = max((float(np.nanmax(c)) for c in curves_percent if np.size(c)), default=100.0)
        step = 5.0 if top <= 50 else 10.0
        return 0.0, float(min(100.0, step * np.ceil((top + 0.5) / step)))
    low, high = (float(v) for v in percent_range)
    return low, high


def plot_spectrum(spectrum, title: str | None = None, percent_range=None):
    """R, T and A (percent) of a :class:`~filmoptic.engine.Spectrum` against wavelength.

    No T curve is drawn for an opaque part (an absorbing half-space substrate); where the
    substrate absorbs, A is drawn split into the layers' and the substrate's share.

    Parameters
    ----------
    spectrum : filmoptic.engine.Spectrum
        One spectrum (R, T, A of shape ``(W,)``); of a batch only the first member is drawn.
    title : str, optional
        Shown above the plot (usually the stack).
    percent_range : None, "auto" or (low, high), optional
        The vertical range (:func:`percent_limits`).

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from filmoptic.engine import compute
    >>> fig = plot_spectrum(compute("n=2.3 60nm / n=1.52 1mm", [400.0, 500.0, 600.0]))
    >>> [line.get_label() for line in fig.axes[0].lines]
    ['R', 'T', 'A']
    >>> fig = plot_spectrum(compute("n=2.3 60nm / n=2+1j", [400.0, 500.0]))   # nothing comes through
    >>> [line.get_label() for line in fig.axes[0].lines]
    ['R', 'A, layers', 'A, substrate']
    """
    return plot_spectra([(title, spectrum)], percent_range=percent_range)


def plot_spectra(panels, percent_range=None):
    """One panel per ``(title, spectrum)`` pair, stacked vertically, sharing the wavelength axis.

    Examples
    --------
    >>> from filmoptic.engine import compute
    >>> s = compute("n=2.3 60nm / n=1.52", [400.0, 500.0, 600.0])
    >>> len(plot_spectra([("a", s), ("b", s)]).axes)
    2
    """
    panels = list(panels)
    fig, axes = new_figure(len(panels), 1, figsize=(7.0, 3.6 * len(panels) + 0.6), squeeze=False,
                           sharex=True)
    for ax, (title, spectrum) in zip(axes[:, 0], panels):
        wl = np.asarray(spectrum.wavelength_nm)
        drawn = []
        for name, values, style in _curves(spectrum):
            drawn.append(100.0 * np.asarray(values).reshape(-1, wl.size)[0])
            ax.plot(wl, drawn[-1], style, label=name, lw=1.6)
        ax.set_ylabel(PERCENT_AXIS)
        if wl.size > 1:
            ax.set_xlim(wl.min(), wl.max())
        ax.set_ylim(*percent_limits(drawn, percent_range))
        ax.grid(True, alpha=0.3)
        ax.legend(loc="best")
        if title:
            ax.set_title(title, fontsize=10)
    axes[-1, 0].set_xlabel("wavelength (nm)")
    fig.tight_layout()
    return fig


def _curves(spectrum):
    """(label, values, line style) to draw: no T curve for an opaque part, and the absorbed
    light split into layers and substrate wherever the substrate absorbs any of it."""
    meaning = getattr(spectrum, "transmission", "exits")
    curves = [("R", spectrum.R, "-")]
    if meaning != "opaque":
        label = "T (into the substrate)" if meaning == "enters substrate" else "T"
        curves.append((label, spectrum.T, "--"))
    A_substrate = getattr(spectrum, "A_substrate", None)
    if A_substrate is not None and np.any(np.asarray(A_substrate) > 0):
        curves += [("A, layers", spectrum.A_layers, ":"), ("A, substrate", A_substrate, "-.")]
    else:
        curves.append(("A", spectrum.A, ":"))
    return curves
