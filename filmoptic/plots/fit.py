"""Figure of a spectrum fit: measured points and the fitted model above, the residuals below.

The upper axis names what is shown (transmittance, reflectance or both); the lower one shows
measured − fitted in percentage points, with a legend that says what the points and the grey band
are (the band is ±σ per point: from the files, from the given σ, or estimated from the residuals).
The title starts with the verdict of :func:`filmoptic.inverse.fit.fit_verdict`.
"""

from __future__ import annotations

import textwrap

import numpy as np

from . import new_figure

__all__ = ["plot_fit"]

_COLOURS = {"T": ("#1f5fa8", "#6fa8dc"), "R": ("#b03a2e", "#e69a8d")}
_NAMES = {"T": "transmittance T", "R": "reflectance R"}


def _axis_name(quantities) -> str:
    if set(quantities) == {"T", "R"}:
        return "transmittance T and reflectance R (%)"
    return f"{_NAMES.get(quantities[0], quantities[0])} (%)" if quantities else "value (%)"


def plot_fit(result, title: str | None = None):
    """Measured points and fitted curves (percent) above, residuals (percentage points) below.

    Parameters
    ----------
    result : filmoptic.inverse.fit.FitResult
    title : str, optional
        Defaults to the verdict and the fitted values.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from filmoptic.engine import compute
    >>> from filmoptic.inverse.fit import fit_spectra
    >>> from filmoptic.inverse.measured import MeasuredSpectrum
    >>> wl = np.arange(400.0, 901.0, 10.0)
    >>> data = MeasuredSpectrum(wl, compute("n=2.2 300nm / n=1.5 1mm", wl).T + 0.001 * np.sin(wl), "T")
    >>> fig = plot_fit(fit_spectra("n=2.2 100..500nm / n=1.5 1mm", data))
    >>> [ax.get_ylabel() for ax in fig.axes]
    ['transmittance T (%)', 'measured − fitted\\n(percentage points)']
    """
    from filmoptic.inverse.fit import fit_verdict

    fig, (top, bottom) = new_figure(
        2, 1, figsize=(7.5, 6.6), sharex=True, gridspec_kw={"height_ratios": [3, 1.4]}
    )
    quantities = list(dict.fromkeys(f.quantity for f in result.fitted))
    several = len(result.fitted) > 1
    for index, f in enumerate(result.fitted):
        data_colour, model_colour = _COLOURS.get(f.quantity, ("black", "grey"))
        source = f.path.rsplit("/", 1)[-1] if f.path else "data"
        top.plot(f.wavelength_nm, 100 * f.measured, ".", ms=3, color=data_colour,
                 label=f"measured {f.quantity} ({source})")
        top.plot(f.wavelength_nm, 100 * f.model, "-", lw=1.3, color=model_colour, label=f"fitted model, {f.quantity}")
        bottom.plot(f.wavelength_nm, 100 * f.residual, ".", ms=3, color=data_colour,
                    label=f"measured − fitted {f.quantity}" + (f" ({source})" if several else ""))
        sigma = f.sigma if f.sigma is not None else (None if result.sigma is None else np.full(f.wavelength_nm.shape,
                                                                                               result.sigma))
        if sigma is not None:
            where = {"file": "from the file", "option": "as given"}.get(result.sigma_source,
                                                                     "estimated from the residuals")
            bottom.fill_between(f.wavelength_nm, -100 * sigma, 100 * sigma, color="0.5", alpha=0.18, lw=0,
                                label=f"±σ per point ({where})" if index == 0 else None)
    bottom.axhline(0.0, color="black", lw=0.8)
    top.set_ylabel(_axis_name(quantities))
    bottom.set_ylabel("measured − fitted\n(percentage points)")
    bottom.set_xlabel("wavelength (nm)")
    top.legend(fontsize="small", loc="best")
    bottom.legend(fontsize="x-small", loc="upper right", ncol=2, framealpha=0.85)
    # Room above the residuals for the legend.
    low, high = bottom.get_ylim()
    bottom.set_ylim(low, high + 0.6 * (high - low))
    top.grid(alpha=0.3)
    bottom.grid(alpha=0.3)
    if title is None:
        values = [
            f"{p.name} = {p.value:.4g}"
            + (f" ± {p.stderr:.2g}" if np.isfinite(p.stderr) else "")
            + (f" {p.unit}" if p.unit else "")
            for p in result.parameters
        ]
        # Two values per line keeps the title narrower than the axes.
        lines = ["; ".join(values[i:i + 2]) for i in range(0, len(values), 2)]
        verdict = textwrap.fill(fit_verdict(result).text, width=95)
        title = "\n".join([verdict, result.model, *lines])
    top.set_title(title, fontsize="small")
    fig.tight_layout()
    return fig
