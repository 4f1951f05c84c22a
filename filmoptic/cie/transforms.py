"""Closed-form colour transforms: chromaticity, CIELAB, LCh, Bradford adaptation, sRGB, CIEDE2000.

Every function broadcasts over leading axes (the last axis holds the three components) and is
written in the same arithmetic as colour-science's implementation of the same standard, so that
the two agree to rounding (the test suite compares them to 1e-12).

* **Chromaticity** x = X/(X+Y+Z), y = Y/(X+Y+Z) (CIE 015:2018 §7.3); black takes the white's x, y.
* **White** of chromaticity (x, y) at Y = 1: (x/y, 1, (1 − x − y)/y).
* **CIELAB** (ISO/CIE 11664-4:2019; CIE 015:2018 §8.2.1): with t = X/Xn, Y/Yn, Z/Zn,
  f(t) = t^(1/3) above (6/29)³ and (841/108)·t + 16/116 below; L* = 116 f(Y/Yn) − 16,
  a* = 500 (f(X/Xn) − f(Y/Yn)), b* = 200 (f(Y/Yn) − f(Z/Zn)). The inverse follows.
* **LCh**: C*ab = √(a*² + b*²), h_ab = atan2(b*, a*) in degrees on [0, 360).
* **Bradford** chromatic adaptation in its linearised von Kries form (Lam 1985; the transform
  ICC profiles use): M_CAT = M⁻¹ · diag(M·W_target / M·W_source) · M.
* **sRGB** (IEC 61966-2-1:1999): the standard's XYZ → linear RGB matrix (and its published
  inverse), white D65 at x, y = 0.3127, 0.3290, and the transfer function 12.92·L up to
  L = 0.0031308, 1.055·L^(1/2.4) − 0.055 above.
* **CIEDE2000** ΔE00 (CIE 142-2001; ISO/CIE 11664-6:2014), in the form of Sharma, Wu & Dalal
  (2005), with k_L = k_C = k_H = 1.

References
----------
CIE 015:2018, *Colorimetry*, 4th ed. ISO/CIE 11664-4:2019 (CIELAB). CIE 142-2001, *Improvement
to industrial colour-difference evaluation*; ISO/CIE 11664-6:2014 (CIEDE2000). G. Sharma, W. Wu &
E. N. Dalal, "The CIEDE2000 color-difference formula: implementation notes, supplementary test
data, and mathematical observations", Color Res. Appl. 30, 21 (2005). IEC 61966-2-1:1999,
*Default RGB colour space — sRGB*. K. M. Lam, *Metamerism and colour constancy*, PhD thesis,
University of Bradford (1985).

Examples
--------
>>> import numpy as np
>>> d65 = (0.3127, 0.3290)
>>> XYZ_to_Lab(white_XYZ(d65), d65).tolist()
[100.0, 0.0, 0.0]
>>> round(float(delta_e00([50, 2.6772, -79.7751], [50, 0, -82.7485])), 4)   # Sharma et al., pair 1
2.0425
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "SRGB_WHITE_XY", "MATRIX_XYZ_TO_SRGB", "MATRIX_SRGB_TO_XYZ", "BRADFORD",
    "XYZ_to_xy", "white_XYZ", "XYZ_to_Lab", "Lab_to_XYZ", "Lab_to_LCh", "bradford_matrix",
    "XYZ_to_srgb_matrix", "srgb_to_XYZ_matrix", "srgb_encode", "srgb_decode", "delta_e00",
]

#: Chromaticity of sRGB's white, D65 (IEC 61966-2-1:1999).
SRGB_WHITE_XY = np.array([0.3127, 0.3290])
#: XYZ → linear sRGB, as IEC 61966-2-1:1999 publishes it (four decimals).
MATRIX_XYZ_TO_SRGB = np.array([[3.2406, -1.5372, -0.4986],
                               [-0.9689, 1.8758, 0.0415],
                               [0.0557, -0.2040, 1.0570]])
#: Linear sRGB → XYZ, as IEC 61966-2-1:1999 publishes it.
MATRIX_SRGB_TO_XYZ = np.array([[0.4124, 0.3576, 0.1805],
                               [0.2126, 0.7152, 0.0722],
                               [0.0193, 0.1192, 0.9505]])
#: The Bradford cone-response matrix (Lam 1985).
BRADFORD = np.array([[0.8951, 0.2664, -0.1614],
                     [-0.7502, 1.7135, 0.0367],
                     [0.0389, -0.0685, 1.0296]])
for _m in (SRGB_WHITE_XY, MATRIX_XYZ_TO_SRGB, MATRIX_SRGB_TO_XYZ, BRADFORD):
    _m.setflags(write=False)

# CIELAB's break point (6/29)³ = (24/116)³, and the slope and offset of its linear part.
_LAB_EPSILON = (24 / 116) ** 3
_LAB_SLOPE = 841 / 108


def XYZ_to_xy(XYZ, white_xy) -> np.ndarray:
    """Chromaticity x, y of XYZ (any scale); a black colour takes ``white_xy``.

    Examples
    --------
    >>> XYZ_to_xy([[20.0, 30.0, 50.0], [0.0, 0.0, 0.0]], (0.3127, 0.329)).tolist()
    [[0.2, 0.3], [0.3127, 0.329]]
    """
    XYZ = np.asarray(XYZ, dtype=float)
    total = XYZ.sum(axis=-1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, XYZ[..., :2] / np.where(total > 0, total, 1.0),
                        np.asarray(white_xy, dtype=float))


def white_XYZ(white_xy) -> np.ndarray:
    """XYZ at Y = 1 of the chromaticity ``white_xy``: (x/y, 1, (1 − x − y)/y).

    Examples
    --------
    >>> white_XYZ((0.3127, 0.329)).round(6).tolist()
    [0.950456, 1.0, 1.089058]
    """
    x, y = (np.asarray(v, dtype=float) for v in np.moveaxis(np.asarray(white_xy, dtype=float), -1, 0))
    Y_y = 1.0 / y
    return np.stack([x * Y_y, np.ones_like(x), (1 - (x + y)) * Y_y], axis=-1)


def _f(t):
    return np.where(t > _LAB_EPSILON, np.power(t, 1 / 3), _LAB_SLOPE * t + 16 / 116)


def _f_inverse(f):
    return np.where(f > 24 / 116, f**3, (f - 16 / 116) * (108 / 841))


def XYZ_to_Lab(XYZ, white_xy) -> np.ndarray:
    """CIELAB L*, a*, b* of XYZ given on a 0–1 scale (Y = 1 for the white), relative to ``white_xy``.

    References
    ----------
    ISO/CIE 11664-4:2019; CIE 015:2018 §8.2.1.

    Examples
    --------
    >>> d65 = (0.3127, 0.329)
    >>> (XYZ_to_Lab(0.18 * white_XYZ(d65), d65).round(2) + 0.0).tolist()     # an 18 % grey
    [49.5, 0.0, 0.0]
    """
    XYZ = np.asarray(XYZ, dtype=float)
    Xn, Yn, Zn = np.moveaxis(white_XYZ(white_xy), -1, 0)
    fx = _f(XYZ[..., 0] / Xn)
    fy = _f(XYZ[..., 1] / Yn)
    fz = _f(XYZ[..., 2] / Zn)
    return np.stack([116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)], axis=-1)


def Lab_to_XYZ(Lab, white_xy) -> np.ndarray:
    """XYZ (0–1 scale) of CIELAB colours relative to ``white_xy``: the inverse of :func:`XYZ_to_Lab`.

    Examples
    --------
    >>> Lab_to_XYZ([100.0, 0.0, 0.0], (0.3127, 0.329)).round(6).tolist()
    [0.950456, 1.0, 1.089058]
    """
    Lab = np.asarray(Lab, dtype=float)
    Xn, Yn, Zn = np.moveaxis(white_XYZ(white_xy), -1, 0)
    fy = (Lab[..., 0] + 16) / 116
    fx = Lab[..., 1] / 500 + fy
    fz = fy - Lab[..., 2] / 200
    return np.stack([Xn * _f_inverse(fx), Yn * _f_inverse(fy), Zn * _f_inverse(fz)], axis=-1)


def Lab_to_LCh(Lab) -> np.ndarray:
    """L*, chroma C*ab and hue angle h_ab (degrees, [0, 360)) of CIELAB colours.

    Examples
    --------
    >>> Lab_to_LCh([50.0, 0.0, -10.0]).tolist()
    [50.0, 10.0, 270.0]
    """
    Lab = np.asarray(Lab, dtype=float)
    a, b = Lab[..., 1], Lab[..., 2]
    return np.stack([Lab[..., 0], np.hypot(a, b), np.degrees(np.arctan2(b, a)) % 360], axis=-1)


def bradford_matrix(source_xy, target_xy) -> np.ndarray:
    """The 3 × 3 Bradford adaptation (column vectors: XYZ_target = M · XYZ_source) between two whites.

    References
    ----------
    Lam (1985); CIE 160:2004 (the linearised Bradford transform).

    Examples
    --------
    >>> bool(np.allclose(bradford_matrix((0.3127, 0.329), (0.3127, 0.329)), np.eye(3)))
    True
    """
    rgb_source = BRADFORD @ white_XYZ(source_xy)
    rgb_target = BRADFORD @ white_XYZ(target_xy)
    return np.linalg.inv(BRADFORD) @ np.diag(rgb_target / rgb_source) @ BRADFORD


def XYZ_to_srgb_matrix(white_xy) -> np.ndarray:
    """Matrix whose rows are the linear sRGB of unit X, Y, Z seen under ``white_xy``.

    Linear sRGB of XYZ (0–1 scale, row vectors) is ``XYZ @ matrix``: Bradford adaptation from the
    white to D65, then the IEC 61966-2-1 matrix.

    Examples
    --------
    >>> rgb = white_XYZ((0.3457, 0.3585)) @ XYZ_to_srgb_matrix((0.3457, 0.3585))   # D50 white
    >>> rgb.round(3).tolist()
    [1.0, 1.0, 1.0]
    """
    return (MATRIX_XYZ_TO_SRGB @ bradford_matrix(white_xy, SRGB_WHITE_XY)).T


def srgb_to_XYZ_matrix(white_xy) -> np.ndarray:
    """Matrix turning linear sRGB (row vectors) into XYZ (0–1 scale) seen under ``white_xy``:
    the IEC 61966-2-1 matrix, then Bradford adaptation from D65 to the white."""
    return (bradford_matrix(SRGB_WHITE_XY, white_xy) @ MATRIX_SRGB_TO_XYZ).T


def srgb_encode(linear) -> np.ndarray:
    """sRGB-encoded values of linear ones (IEC 61966-2-1 transfer function; no clipping).

    Examples
    --------
    >>> srgb_encode([0.0, 0.0031308, 1.0]).round(6).tolist()
    [0.0, 0.04045, 1.0]
    """
    L = np.asarray(linear, dtype=float)
    return np.where(L <= 0.0031308, L * 12.92, 1.055 * np.sign(L) * np.abs(L) ** (1 / 2.4) - 0.055)


def srgb_decode(encoded) -> np.ndarray:
    """Linear values of sRGB-encoded ones (IEC 61966-2-1), the inverse of :func:`srgb_encode`.

    ``V / 12.92`` for V ≤ 0.04045 (the standard's break point, written as it writes it; it differs
    from the encoding's image of 0.0031308 by 5e-8, which moves no decoded value by more than
    2e-9), ``((V + 0.055) / 1.055) ** 2.4`` above.

    Examples
    --------
    >>> float(srgb_decode(srgb_encode(0.5)))
    0.5
    >>> [round(float(v), 6) for v in srgb_decode([0.0, 0.04045, 0.5, 1.0])]
    [0.0, 0.003131, 0.214041, 1.0]
    """
    V = np.asarray(encoded, dtype=float)
    x = (V + 0.055) / 1.055
    return np.where(V <= 0.04045, V / 12.92, np.sign(x) * np.abs(x) ** 2.4)


def delta_e00(Lab1, Lab2) -> np.ndarray:
    """CIEDE2000 colour difference ΔE00 (k_L = k_C = k_H = 1), broadcasting over leading axes.

    References
    ----------
    CIE 142-2001; ISO/CIE 11664-6:2014; Sharma, Wu & Dalal, Color Res. Appl. 30, 21 (2005).
    """
    Lab1 = np.asarray(Lab1, dtype=float)
    Lab2 = np.asarray(Lab2, dtype=float)
    L1, a1, b1 = Lab1[..., 0], Lab1[..., 1], Lab1[..., 2]
    L2, a2, b2 = Lab2[..., 0], Lab2[..., 1], Lab2[..., 2]
    C_bar = (np.hypot(a1, b1) + np.hypot(a2, b2)) / 2
    C_bar_7 = C_bar**7
    G = 0.5 * (1 - np.sqrt(C_bar_7 / (C_bar_7 + 25**7)))
    a1p = (1 + G) * a1
    a2p = (1 + G) * a2
    C1p = np.hypot(a1p, b1)
    C2p = np.hypot(a2p, b2)
    h1p = np.where((b1 == 0) & (a1p == 0), 0, np.degrees(np.arctan2(b1, a1p)) % 360)
    h2p = np.where((b2 == 0) & (a2p == 0), 0, np.degrees(np.arctan2(b2, a2p)) % 360)
    dL = L2 - L1
    dC = C2p - C1p
    dh = h2p - h1p
    C12 = C1p * C2p
    dh = np.select([C12 == 0, np.fabs(dh) <= 180, dh > 180, dh < -180], [0, dh, dh - 360, dh + 360])
    dH = 2 * np.sqrt(C12) * np.sin(np.deg2rad(dh / 2))
    L_bar = (L1 + L2) / 2
    Cp_bar = (C1p + C2p) / 2
    spread = np.fabs(h1p - h2p)
    h_sum = h1p + h2p
    h_bar = np.select(
        [C12 == 0, spread <= 180, (spread > 180) & (h_sum < 360), (spread > 180) & (h_sum >= 360)],
        [h_sum, h_sum / 2, (h_sum + 360) / 2, (h_sum - 360) / 2])
    T = (1 - 0.17 * np.cos(np.deg2rad(h_bar - 30)) + 0.24 * np.cos(np.deg2rad(2 * h_bar))
         + 0.32 * np.cos(np.deg2rad(3 * h_bar + 6)) - 0.20 * np.cos(np.deg2rad(4 * h_bar - 63)))
    d_theta = 30 * np.exp(-(((h_bar - 275) / 25) ** 2))
    Cp_bar_7 = Cp_bar**7
    R_C = 2 * np.sqrt(Cp_bar_7 / (Cp_bar_7 + 25**7))
    L50 = (L_bar - 50) ** 2
    S_L = 1 + ((0.015 * L50) / np.sqrt(20 + L50))
    S_C = 1 + 0.045 * Cp_bar
    S_H = 1 + 0.015 * Cp_bar * T
    R_T = -np.sin(np.deg2rad(2 * d_theta)) * R_C
    return np.sqrt((dL / S_L) ** 2 + (dC / S_C) ** 2 + (dH / S_H) ** 2 + R_T * (dC / S_C) * (dH / S_H))
