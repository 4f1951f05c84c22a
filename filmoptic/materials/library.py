"""The optical-constant library: shipped nkdata tables plus a user's own folder.

Names are looked up case-insensitively. ``NAME`` selects the name's default dataset and
``NAME:DATASET`` (or ``get_material(NAME, DATASET)``) another one; a dataset may also be named by
its alias (the short name of the source entry, e.g. ``Johnson``).

The shipped tables live in the package ``filmoptic.nkdata`` (the repository's ``nkdata/`` folder).
A folder named by the environment variable ``FILMOPTIC_NKDATA`` adds a user's files in the same
format; a user dataset with the same name and dataset as a shipped one replaces it (and
``filmoptic materials`` says so). Only headers are read to list the library; a table is parsed
the first time it is used and then cached.
"""

from __future__ import annotations

import difflib
import functools
import os
import re
from dataclasses import replace
from pathlib import Path

from filmoptic.errors import DataFileError, UnknownMaterialError

from .base import KINDS, MaterialInfo
from .films import sample_form
from .tables import TabulatedMaterial, header_range, load_nk_file, read_header

__all__ = ["get_material", "list_materials", "material_names", "library_folders", "ENV_VAR"]

#: Environment variable naming a folder of the user's own nkdata files.
ENV_VAR = "FILMOPTIC_NKDATA"
_SUFFIXES = {".txt", ".nk"}


def shipped_folder() -> Path:
    """Folder of the shipped nkdata files (installed package, else the source tree)."""
    try:
        from importlib.resources import files

        folder = Path(str(files("filmoptic.nkdata")))
        if folder.is_dir():
            return folder
    except (ModuleNotFoundError, TypeError):  # pragma: no cover - broken install
        pass
    return Path(__file__).resolve().parents[2] / "nkdata"  # pragma: no cover - source tree


def library_folders() -> list:
    """``[(folder, "shipped"), (folder, "user")…]`` in the order they are read."""
    folders = [(shipped_folder(), "shipped")]
    user = os.environ.get(ENV_VAR, "").strip()
    if user:
        folders.append((Path(os.path.expanduser(user)), "user"))
    return folders


def _folder_stamp(folder: Path) -> int:
    try:
        return folder.stat().st_mtime_ns
    except OSError:
        return -1


def _index():
    from filmoptic.files import note_input_folder

    user = os.environ.get(ENV_VAR, "").strip()
    user_folder = Path(os.path.expanduser(user)) if user else None
    # Every file in the library folders is an input of the run: no output may land among them.
    for folder in (shipped_folder(), user_folder):
        if folder is not None:
            note_input_folder(folder, tuple(sorted(_SUFFIXES)))
    stamp = _folder_stamp(user_folder) if user_folder else 0
    return _build_index(str(shipped_folder()), str(user_folder) if user_folder else "", stamp)


def _info_from_file(path: Path, source: str) -> MaterialInfo:
    header = read_header(path)
    stem_name, _, stem_dataset = path.stem.partition("__")
    name = header.get("material") or stem_name
    dataset = header.get("dataset") or stem_dataset or "file"
    kind = (header.get("kind") or "dielectric").lower()
    if kind not in KINDS:
        raise DataFileError(f"{path}: kind must be one of {', '.join(KINDS)}, got {kind!r}")
    wl_range = header_range(header)
    if wl_range is None:
        # A user's file without range_nm: the rows tell (parsing it once here is fine).
        wl_range = load_nk_file(path).wavelength_range_nm
    aliases = tuple(a.strip() for a in header.get("aliases", "").split(",") if a.strip())
    return MaterialInfo(
        name=name, dataset=dataset, default=header.get("default", "").lower() in ("yes", "true", "1"),
        kind=kind, reference=header.get("reference", ""), sample=header.get("sample", ""),
        wavelength_range_nm=tuple(float(x) for x in wl_range), licence=header.get("licence", ""),
        path=str(path), source=source, aliases=aliases, citation=header.get("citation", ""),
        form=header.get("form", "") or sample_form(header.get("sample", "")),
    )


@functools.lru_cache(maxsize=8)
def _build_index(shipped: str, user: str, stamp: int):
    """{name_lower: (canonical name, {dataset_lower: MaterialInfo}, default dataset_lower)}."""
    entries: dict = {}
    folders = [(Path(shipped), "shipped")] + ([(Path(user), "user")] if user else [])
    for folder, source in folders:
        if source == "user" and not folder.is_dir():
            raise DataFileError(f"{ENV_VAR} names {folder}, which is not a folder")
        for path in sorted(folder.iterdir()):
            if path.suffix.lower() not in _SUFFIXES or path.name.startswith("."):
                continue
            info = _info_from_file(path, source)
            key = info.name.lower()
            name, datasets, user_default = entries.get(key, (info.name, {}, None))
            ds_key = info.dataset.lower()
            if ds_key in datasets and datasets[ds_key].source == "shipped" and source == "user":
                info = replace(info, overrides=True, default=info.default or datasets[ds_key].default)
            datasets[ds_key] = info
            if source == "user" and info.default:
                user_default = ds_key
            entries[key] = (name, datasets, user_default)
    index = {}
    for key, (name, datasets, user_default) in entries.items():
        default = user_default or next(
            (k for k, v in datasets.items() if v.default and v.source == "shipped"),
            None,
        ) or sorted(datasets)[0]
        final = {k: replace(v, default=(k == default)) for k, v in datasets.items()}
        index[key] = (name, final, default)
    return index


def _natural(text: str) -> list:
    """Sort key that puts 25nm before 117nm."""
    return [(0, int(t), "") if t.isdigit() else (1, 0, t) for t in re.split(r"(\d+)", text) if t]


def material_names() -> list:
    """Every library name (shipped and user), sorted case-insensitively."""
    return sorted((name for name, _, _ in _index().values()), key=str.lower)


def list_materials() -> list:
    """Every name × dataset in the library, as :class:`MaterialInfo` (headers only).

    Sorted by name, the default dataset first.

    Examples
    --------
    >>> infos = list_materials()
    >>> any(i.name == "Ti" and i.default for i in infos)
    True
    """
    out = []
    for name, datasets, default in sorted(_index().values(), key=lambda e: e[0].lower()):
        out.append(datasets[default])
        out.extend(v for k, v in sorted(datasets.items(), key=lambda kv: _natural(kv[0])) if k != default)
    return out


def datasets_covering(name: str, low_nm: float, high_nm: float) -> list:
    """The datasets of library material ``name`` whose range covers ``low_nm``–``high_nm``.

    For the hint of a wavelength-range error: another dataset of the same material may serve
    (Johnson & Christy's silver stops at 1937 nm; Yang 2015 runs to 24.9 µm).

    Examples
    --------
    >>> [i.dataset for i in datasets_covering("Ag", 400, 2500)][:1]
    ['Babar-2015']
    """
    entry = _index().get(name.strip().lower())
    if entry is None:
        return []
    # Datasets of thick films and bulk material first: they stand for a part that is not a thin film.
    ordered = sorted(entry[1].values(), key=lambda i: ((i.form or "").startswith("thin"), _natural(i.dataset)))
    return [i for i in ordered if i.wavelength_range_nm[0] <= low_nm and i.wavelength_range_nm[1] >= high_nm]


def suggest(name: str, choices, n: int = 4) -> list:
    """Close matches for a mistyped name (case-insensitive, difflib)."""
    lowered = {c.lower(): c for c in choices}
    target = name.lower()
    hits = difflib.get_close_matches(target, list(lowered), n=n, cutoff=0.5)
    # Names that start with what was typed (or vice versa) are likely meant too.
    hits += [c for c in sorted(lowered) if c not in hits and len(target) >= 2
             and (c.startswith(target) or target.startswith(c))]
    return [lowered[h] for h in hits[:n]]


def find_dataset(name: str, dataset: str | None = None) -> MaterialInfo:
    """The :class:`MaterialInfo` for ``name`` (and ``dataset``), raising with suggestions."""
    if dataset is None and ":" in name:
        name, dataset = (part.strip() for part in name.split(":", 1))
    index = _index()
    entry = index.get(name.strip().lower())
    if entry is None:
        from .common_names import common_name

        # "copper", "float glass": a common name stands for a library name (and maybe a dataset).
        mapped = common_name(name)
        if mapped is not None:
            mapped_name, _, mapped_dataset = mapped.partition(":")
            return find_dataset(mapped_name, dataset if dataset and dataset.strip() else (mapped_dataset or None))
        from .gaps import gap_note

        missing = gap_note(name)
        if missing:
            raise UnknownMaterialError(f"{name.strip()} is not in the library: {missing}")
        names = [e[0] for e in index.values()]
        close = suggest(name.strip(), names)
        hint = f": did you mean {', '.join(close)}?" if close else "; `filmoptic materials` lists the library"
        raise UnknownMaterialError(f"unknown material {name.strip()!r}{hint}")
    canonical, datasets, default = entry
    if dataset is None or not dataset.strip():
        return datasets[default]
    wanted = dataset.strip().lower()
    if wanted in datasets:
        return datasets[wanted]
    for info in datasets.values():
        if wanted in (a.lower() for a in info.aliases):
            return info
    available = ", ".join(
        v.dataset + (" (default)" if k == default else "") for k, v in sorted(datasets.items())
    )
    close = suggest(dataset.strip(), [v.dataset for v in datasets.values()], n=2)
    hint = f" did you mean {', '.join(close)}?" if close else ""
    raise UnknownMaterialError(
        f"{canonical} has no dataset {dataset.strip()!r}:{hint} available: {available}"
    )


def get_material(name: str, dataset: str | None = None) -> TabulatedMaterial:
    """A library material by name, optionally a named dataset (``"Au:Yakubovsky-25nm"`` works too).

    Parameters
    ----------
    name : str
        Library name, case-insensitive; may carry ``:DATASET``.
    dataset : str, optional
        Dataset name or alias; the name's default when omitted.

    Returns
    -------
    TabulatedMaterial

    Raises
    ------
    UnknownMaterialError
        With the nearest library names (or the available datasets) in the message.

    Examples
    --------
    >>> get_material("Ti").kind
    'metal'
    """
    info = find_dataset(name, dataset)
    table = load_nk_file(info.path)
    # The cached table is shared; hand out a light copy that knows whether it is the default.
    return _copy_table(table, info)


def _copy_table(table: TabulatedMaterial, info: MaterialInfo) -> TabulatedMaterial:
    if table.wavelength.size > 1:
        table.interpolants()  # built once, shared by every copy
    material = object.__new__(TabulatedMaterial)
    material.__dict__.update(table.__dict__)
    material.name = info.name
    material.dataset = info.dataset
    material.kind = info.kind
    material.is_default = info.default
    return material
