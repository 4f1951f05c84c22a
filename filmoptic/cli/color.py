"""``filmoptic color``: the colour a coated part shows, and how much light it passes to the eye."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    ambient_option,
    angle_option,
    check_plot_path,
    echo_caution,
    emit_json,
    extrapolate_option,
    json_option,
    paper_option,
    percent,
    print_table,
    save_plot,
    user_errors,
    transmission_note,
    echo_surface_oxides,
    warn_thin_metal,
)

__all__ = ["color", "illuminant_option", "observer_option", "colour_json", "LOW_LIGHT_CAUTION",
           "OUT_OF_GAMUT_NOTE"]

illuminant_option = click.option(
    "--illuminant", default="D65", show_default=True, metavar="NAME|FILE",
    help="Light the part is seen under: D65 (daylight), D50, A (incandescent), C, E, F1–F12 "
         "(fluorescent), LED-B1…LED-B5, LED-BH1, LED-RGB1, LED-V1, LED-V2, another CIE "
         "illuminant by its name in colour-science (D60, FL3.1…FL3.15, HP1…HP5, ID65, …), or a "
         "two-column file 'wavelength_nm value' with the lamp's relative spectrum covering 380–780 nm.",
)
class ObserverType(click.Choice):
    """2 or 10, also written with a degree sign or 'deg' (10°, 10deg) as people do."""

    def convert(self, value, param, ctx):
        text = str(value).strip().lower().removesuffix("deg").removesuffix("°").strip()
        return super().convert(text, param, ctx)


observer_option = click.option(
    "--observer", type=ObserverType(["2", "10"]), default="2", show_default=True,
    help="CIE standard observer: 2 (1931, small patches) or 10 (1964, large patches).",
)

#: Shown when a coating passes little light: people look at the sun or arcs through such things.
LOW_LIGHT_CAUTION = (
    "a luminous transmittance of {t} % is computed, not measured, and says nothing about ultraviolet "
    "or infrared; never use a coated piece to look at the sun, a welding arc or a laser instead of a "
    "certified filter."
)
LOW_LIGHT_LIMIT = 0.10
#: Angles the colour sheet shows when --angles is not given.
SHEET_ANGLES_DEG = (0.0, 20.0, 40.0, 60.0)


#: Below a table where a colour marked '*' is shown gamut-mapped (shared with sweep).
OUT_OF_GAMUT_NOTE = "* outside the sRGB gamut: shown with reduced chroma at the same lightness and hue."

_VIEW_KEYS = ("reflected", "reflected_reverse", "transmitted")


def colour_json(colour) -> dict:
    """The JSON form of one :class:`~filmoptic.colorimetry.Colour` (fractions and CIE units)."""
    return {
        "XYZ": colour.XYZ, "xy": colour.xy, "Lab": colour.Lab, "LCh": colour.LCh,
        "rgb8": colour.rgb8, "hex": colour.hex, "in_gamut": colour.in_gamut,
    }


def _colour_row(label, colour, notation, value) -> list:
    from filmoptic.describe.colour_words import colour_word

    L, a, b = (float(v) for v in colour.Lab)
    _, C, h = (float(v) for v in colour.LCh)
    x, y = (float(v) for v in colour.xy)
    mark = "" if colour.in_gamut else " *"
    return [label, colour_word(colour.Lab), f"{L:.1f}", f"{a:+.1f}", f"{b:+.1f}", f"{C:.1f}", f"{h:.0f}",
            colour.hex + mark, f"{float(colour.XYZ[1]):.2f}", f"{x:.4f}", f"{y:.4f}", notation, percent(value)]


def _main_tables(result, title, stack) -> None:
    """One table, a row per way the part is seen, in the coater's words; the absorbed light beneath."""
    from filmoptic.describe.views import view_names

    names = view_names(stack)
    lum = result.luminous
    luminous = {"reflected": ("Rv", lum.R), "reflected_reverse": ("Rv", lum.R_reverse),
                "transmitted": ("Tv", lum.T)}
    rows = [_colour_row(names[key], getattr(result, key), *luminous[key])
            for key in _VIEW_KEYS if getattr(result, key) is not None]
    print_table(["seen from", "colour", "L*", "a*", "b*", "C*", "h°", "sRGB", "Y", "x", "y", "ISO 9050", "%"],
                rows, title=title)
    echo_surface_oxides(stack)
    where = "glass" if names["reflected_reverse"] == "glass side" else "substrate"
    click.echo(f"absorbed (luminous): {percent(lum.A_layers)} % in the film, {percent(lum.A_substrate)} % "
               f"in the {where}" + ("; through: none" if result.transmitted is None else ""))
    note = transmission_note(result.transmission)
    if note:
        click.echo(note)


def _angle_rows(angles, result) -> list:
    rows = []
    for i, angle in enumerate(angles):
        row = [f"{angle:g}"]
        for key in _VIEW_KEYS:
            colour = getattr(result, key)
            if colour is None:
                continue
            one = colour[i]
            L, a, b = (float(v) for v in one.Lab)
            row += [f"{L:.1f}", f"{a:+.1f}", f"{b:+.1f}", one.hex + ("" if one.in_gamut else " *")]
        row += [percent(result.luminous.R[i])]
        if result.luminous.R_reverse is not None:
            row.append(percent(result.luminous.R_reverse[i]))
        row.append(percent(result.luminous.T[i]))
        row += [percent(result.luminous.A_layers[i]), percent(result.luminous.A_substrate[i])]
        rows.append(row)
    return rows


def _angle_headers(result, stack) -> list:
    from filmoptic.describe.views import view_names

    names = view_names(stack)
    short = {"reflected": "film", "reflected_reverse": names["reflected_reverse"].split()[0],
             "transmitted": "through"}
    headers = ["angle°"]
    for key in _VIEW_KEYS:
        if getattr(result, key) is None:
            continue
        headers += [f"{short[key]} L*", f"{short[key]} a*", f"{short[key]} b*", f"{short[key]} sRGB"]
    headers.append("Rv film %")
    if result.luminous.R_reverse is not None:
        headers.append(f"Rv {short['reflected_reverse']} %")
    where = "glass" if short["reflected_reverse"] == "glass" else "subst."
    return headers + ["Tv %", "A film %", f"A {where} %"]


def _luminous_json(lum, index=None) -> dict:
    def pick(v):
        return None if v is None else (v if index is None else v[index])

    return {"T": pick(lum.T), "R": pick(lum.R), "R_reverse": pick(lum.R_reverse),
            "A_layers": pick(lum.A_layers), "A_substrate": pick(lum.A_substrate)}


def _angles_json(angles, result) -> list:
    entries = []
    for i, angle in enumerate(angles):
        entries.append({
            "angle_deg": float(angle),
            "reflected": colour_json(result.reflected[i]),
            "reflected_reverse": None if result.reflected_reverse is None else colour_json(result.reflected_reverse[i]),
            "transmitted": None if result.transmitted is None else colour_json(result.transmitted[i]),
            "luminous": _luminous_json(result.luminous, i),
        })
    return entries


def _temperature_json(t):
    return None if t is None else {"K": t.cct_K, "Duv": t.duv, "xy": list(t.xy)}


def _description_json(description, munsell, cct) -> dict:
    out = {}
    if munsell:
        out["munsell"] = {"reflected": description.munsell, "reflected_reverse": description.munsell_reverse,
                          "illuminant": "C", "observer": 2}
    if cct:
        out["cct"] = {"light": _temperature_json(description.light),
                      "transmitted": _temperature_json(description.transmitted)}
    out["description_notes"] = list(description.notes)
    return out


def _temperature_text(t) -> str:
    if t is None:
        return "none"
    kelvin = "no CCT" if t.cct_K is None else f"{t.cct_K:.0f} K"
    return f"{kelvin} (Duv {t.duv:+.4f})"


def _echo_description(description, munsell, cct) -> None:
    click.echo("")
    if munsell:
        text = f"Munsell (illuminant C, 2°): reflected, coated side {description.munsell or '–'}"
        if description.munsell_reverse is not None:
            text += f"; substrate side {description.munsell_reverse}"
        click.echo(text)
    if cct:
        text = f"Correlated colour temperature: the light ({description.illuminant}) {_temperature_text(description.light)}"
        if description.transmitted is not None:
            text += f"; through the part {_temperature_text(description.transmitted)}"
        click.echo(text)
    for note in description.notes:
        click.echo(f"Note: {note}.")


def caution_if_dark(luminous_T) -> None:
    """Warn on stderr when light does pass but little of it (the case people misuse as a filter)."""
    import numpy as np

    t = np.atleast_1d(np.asarray(luminous_T, dtype=float))
    passing = t[t > 1e-6]
    if passing.size and passing.min() < LOW_LIGHT_LIMIT:
        echo_caution(LOW_LIGHT_CAUTION.format(t=percent(passing.min())))


@click.command()
@click.argument("stack")
@illuminant_option
@observer_option
@angle_option
@click.option(
    "--angles", metavar="ANGLES",
    help="Also show how the colour travels with viewing angle: START:STOP:STEP or a comma list "
         "in degrees (e.g. 0:60:15). Adds a table, an 'angles' list to --json and a row per angle "
         "to the swatch.",
)
@ambient_option
@click.option(
    "--swatch", "swatch_path", metavar="FILE",
    help="Write a printable colour sheet (one page, A4 or --paper letter) of the part's colours with "
         "their values: .png, .svg or .pdf.",
)
@click.option(
    "--munsell", is_flag=True,
    help="Also give the Munsell notation (hue value/chroma, e.g. 5.2PB 4.1/8.3) of the reflected "
         "colours, as if they were matte surfaces, under illuminant C (the Munsell system's own "
         "light, whatever --illuminant says). Colours outside the Munsell data have none.",
)
@click.option(
    "--cct", is_flag=True,
    help="Also give the correlated colour temperature of the light and of the light that comes "
         "through the part, in kelvin, with Duv, its distance from the black-body line (none "
         "beyond 0.05).",
)
@paper_option
@extrapolate_option
@json_option
def color(stack, illuminant, observer, angle, angles, ambient, swatch_path, munsell, cct, paper, extrapolate,
          as_json):
    """Colour and luminous values of STACK seen in reflection and transmission.

    STACK is written in the order light meets it and must have no unknowns, e.g.

    \b
        filmoptic color "TiO2 60nm / Ti"
        filmoptic color "Ti 12nm / glass 4mm" --illuminant A --angles 0:60:15

    Three colours are reported, in the words of the trade: the film side (light reflected by the
    coated face), the glass side (the part turned over: only when the substrate is a slab with a
    thickness, such as 'glass 4mm'; the back side when the slab is not glass), and through (the
    light that comes through the part).
    Each is given as CIE XYZ (Y from 0 to 100), chromaticity x, y, CIELAB L*, a*, b*, chroma C*
    and hue angle h, and the sRGB colour a screen would show. CIELAB uses the illuminant's own
    white, so a neutral grey has a* = b* = 0 under any light; for display, colours are adapted to
    D65 with the Bradford transform. A colour no screen can show is marked '*' (in_gamut false in
    JSON) and shown with its chroma reduced at the same lightness and hue, never clipped.

    When the substrate is an absorbing half-space (a metal or silicon written without a
    thickness), no light comes through: there is no transmitted colour, T is 0 and the light that
    enters the substrate is reported as absorbed there. The luminous table splits the absorbed
    light between the layers and the substrate (inside a glass plate, or in a metal or silicon
    half-space). For a transparent half-space such as 'glass' without a thickness, T is the
    light that enters it, and the output says so once.

    Luminous transmittance Tv and reflectance Rv follow ISO 9050 (the light's spectrum × the
    eye's daylight sensitivity V(λ), 380–780 nm); with another --illuminant its spectrum replaces
    D65. Light is unpolarised.

    --swatch writes a colour sheet to hold beside the part: a large patch per view with its
    name and numbers (the through view drawn as the part on a lit light box; none for a part that
    lets nothing through), a bar of where the light goes, and the part seen at an angle (the
    --angles, or 0, 20, 40 and 60° when none are given).

    With --json the output holds the keys reflected, reflected_reverse (null for a half-space
    substrate), transmitted (null when no light comes through), luminous (T, R, R_reverse,
    A_layers, A_substrate as fractions) and transmission (what T means: exits, enters substrate
    or opaque) and surface_oxides (what 'METAL D + Xnm oxide' expanded to), plus angles when
    --angles is given, munsell (reflected, reflected_reverse, illuminant, observer) with
    --munsell, cct (light and transmitted, each with K, Duv and xy) with --cct, and
    description_notes (why one of them is missing).

    Colours on screen and in print depend on the device; compare physical samples under the
    chosen light before promising a colour to a customer.
    """
    import numpy as np

    from filmoptic.colorimetry import appearance, check_illuminant, check_observer
    from filmoptic.stack import parse_stack
    from filmoptic.units import parse_angles_deg

    with user_errors():
        if swatch_path:
            check_plot_path(swatch_path)
        obs = check_observer(observer)
        label = check_illuminant(illuminant)
        angle_list = parse_angles_deg(angles) if angles else None
        parsed = parse_stack(stack, ambient=ambient)
        result = appearance(parsed, illuminant=illuminant, observer=obs, angle_deg=angle, extrapolate=extrapolate)
        by_angle = (appearance(parsed, illuminant=illuminant, observer=obs, angle_deg=angle_list,
                               extrapolate=extrapolate) if angle_list is not None else None)
        description = None
        if munsell or cct:
            from filmoptic.describe.descriptions import describe

            description = describe(parsed, illuminant=illuminant, angle_deg=angle, extrapolate=extrapolate,
                                   munsell=munsell, cct=cct)
        warn_thin_metal(parsed)

    if swatch_path:
        # Written before anything is printed, so that a failure leaves no half report on stdout.
        from filmoptic.plots.swatch import swatch_figure
        from filmoptic.describe.views import back_side

        with user_errors():
            sheet_angles, sheet = angle_list, by_angle
            if sheet_angles is None:
                sheet_angles = np.array(SHEET_ANGLES_DEG)
                sheet = appearance(parsed, illuminant=illuminant, observer=obs, angle_deg=sheet_angles,
                                   extrapolate=extrapolate)
            fig = swatch_figure(result, stack_text=stack, ambient=ambient, angle_deg=angle, by_angle=sheet,
                                angles_deg=sheet_angles, paper=paper, back_side=back_side(parsed))
            save_plot(fig, swatch_path)

    if as_json:
        payload = {
            "reflected": colour_json(result.reflected),
            "reflected_reverse": None if result.reflected_reverse is None else colour_json(result.reflected_reverse),
            "transmitted": None if result.transmitted is None else colour_json(result.transmitted),
            "luminous": _luminous_json(result.luminous),
            "transmission": result.transmission,
            "surface_oxides": list(parsed.surface_oxides()),
        }
        if by_angle is not None:
            payload["angles"] = _angles_json(angle_list, by_angle)
        if description is not None:
            payload.update(_description_json(description, munsell, cct))
        emit_json(payload)
    else:
        title = f"Colour of {stack!r} — {label} light, {obs}° observer, seen at {angle:g}°, in {ambient}"
        _main_tables(result, title, parsed)
        if by_angle is not None:
            click.echo("")
            print_table(_angle_headers(by_angle, parsed), _angle_rows(angle_list, by_angle),
                        title="Colour versus viewing angle")
        flagged = [result.reflected, result.reflected_reverse, result.transmitted]
        if by_angle is not None:
            flagged += [by_angle.reflected, by_angle.reflected_reverse, by_angle.transmitted]
        if any(c is not None and not np.all(c.in_gamut) for c in flagged):
            click.echo(OUT_OF_GAMUT_NOTE)
        if description is not None:
            _echo_description(description, munsell, cct)

    if swatch_path and not as_json:
        click.echo(f"Swatch written to {swatch_path}")
    if result.transmission_exits:
        caution_if_dark(result.luminous.T)
