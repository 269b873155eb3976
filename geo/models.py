"""The registry of field models: the shipped ones, the user's installed ones, and ``auto``.

Shipped (package data, see ``geo/data/SOURCES.md``): ``igrf14`` (IGRF-14, 1900.0-2030.0),
``wmm2025`` and ``wmmhr2025`` (2025.0-2030.0). User models live in the user data directory:
``$LODELINE_DATA``, else ``$XDG_DATA_HOME/lodeline``, else ``~/.local/share/lodeline``; each is
one file ``models/NAME.FORMAT`` (FORMAT one of ``shc``, ``cof``, ``gufm``) kept byte for byte
as the user gave it.

Validity intervals are used half-open, ``[start, end)``: IGRF-14 covers 1900-01-01 up to and
including 2029-12-31. ``auto`` picks IGRF-14 inside its interval and, for earlier dates, an
installed user model covering the date (``gufm1`` first if installed). Nothing is ever
extrapolated: a date outside the chosen model raises :class:`ModelRangeError` naming the
interval and the remedies.
"""

from __future__ import annotations

import functools
import os
import re
import stat
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError, ModelFileError, ModelRangeError
from .synthesis import SphericalHarmonicModel

#: Name meaning "choose by date".
AUTO = "auto"
#: The model ``auto`` uses from 1900 on.
DEFAULT_MODEL = "igrf14"
#: The historical model ``auto`` prefers before 1900 when installed.
PREFERRED_HISTORICAL = "gufm1"

_NAME = re.compile(r"^[a-z][a-z0-9_-]{0,31}$")

REMEDIES = (
    "install a historical model with 'lodeline models add FILE' (for example gufm1, "
    "1590-1990), give the declination by hand in the document, or fit it from found "
    "monuments with 'lodeline fit'"
)


@dataclass(frozen=True)
class ModelInfo:
    """What the registry knows about a model without necessarily loading it."""

    name: str
    title: str
    fmt: str  # 'shc' | 'cof' | 'gufm'
    path: Path
    shipped: bool
    publisher: str = ""


_SHIPPED = (
    ModelInfo("igrf14", "IGRF-14", "shc", Path("IGRF14.shc"), True, "IAGA Working Group V-MOD"),
    ModelInfo("wmm2025", "WMM2025", "cof", Path("WMM_2025.COF"), True, "NOAA NCEI and BGS"),
    ModelInfo("wmmhr2025", "WMMHR2025", "cof", Path("WMMHR_2025.COF"), True, "NOAA NCEI and BGS"),
)


def data_dir() -> Path:
    """The user data directory of lodeline (not created here)."""
    env = os.environ
    return _data_dir(env.get("LODELINE_DATA"), env.get("XDG_DATA_HOME"), env.get("HOME"))


@functools.lru_cache(maxsize=8)
def _data_dir(lodeline_data: str | None, xdg_data_home: str | None, home: str | None) -> Path:
    if lodeline_data:
        return Path(lodeline_data)
    if xdg_data_home:
        return Path(xdg_data_home) / "lodeline"
    return Path.home() / ".local" / "share" / "lodeline"


def user_model_dir() -> Path:
    """Folder holding the user's installed model files."""
    return _user_model_dir(data_dir())


@functools.lru_cache(maxsize=8)
def _user_model_dir(data: Path) -> Path:
    return data / "models"


def shipped_path(info: ModelInfo) -> Path:
    """Absolute path of a shipped model's data file."""
    from . import data as shipped_data

    folder = getattr(shipped_data, "__file__", None)
    if folder:  # a package installed as files (the usual case): no importlib.resources
        return Path(folder).parent / info.path
    from importlib import resources

    return Path(str(resources.files(shipped_data).joinpath(str(info.path))))


@functools.cache
def shipped_models() -> tuple[ModelInfo, ...]:
    """The models that come with the package (looked up once: package data does not move)."""
    return tuple(
        ModelInfo(i.name, i.title, i.fmt, shipped_path(i), True, i.publisher) for i in _SHIPPED
    )


def user_models() -> tuple[ModelInfo, ...]:
    """The models installed in the user data directory, sorted by name.

    The listing is remembered while the folder's modification time is unchanged (adding,
    removing or renaming a file changes it; a file rewritten in place keeps its name, and
    :func:`load_model` re-reads it when its own time or size changes).
    """
    folder = user_model_dir()
    try:
        st = folder.stat()
    except OSError:
        return ()
    if not stat.S_ISDIR(st.st_mode):
        return ()
    return _list_user_models(str(folder), st.st_mtime_ns, st.st_ino)


@functools.lru_cache(maxsize=8)
def _list_user_models(folder_name: str, mtime_ns: int, inode: int) -> tuple[ModelInfo, ...]:
    folder = Path(folder_name)
    found = []
    for path in sorted(folder.iterdir()):
        stem, dot, fmt = path.name.rpartition(".")
        if dot and fmt in ("shc", "cof", "gufm") and _NAME.match(stem) and path.is_file():
            found.append(ModelInfo(stem, stem, fmt, path, False, "user file"))
    return tuple(found)


def available_models() -> tuple[ModelInfo, ...]:
    """Shipped models first, then user models."""
    return shipped_models() + user_models()


def find_model(name: str) -> ModelInfo:
    """The model registered under ``name`` (case-insensitive); ModelRangeError if unknown."""
    key = name.strip().lower()
    for info in available_models():
        if info.name == key:
            return info
    names = ", ".join(i.name for i in available_models())
    raise ModelRangeError(
        f"unknown field model '{name}' (available: {names}, or 'auto')", field="model"
    )


@functools.lru_cache(maxsize=32)
def _load(path: str, fmt: str, name: str, title: str, mtime_ns: int, size: int):
    from .model_cache import load_cached

    return load_cached(path, fmt, name, title, mtime_ns, size)


def load_model(name_or_info: str | ModelInfo) -> SphericalHarmonicModel:
    """Parse (once; cached while the file is unchanged, in memory and in binary form in the
    user's cache folder, see :mod:`geo.model_cache`) and return a model."""
    info = name_or_info if isinstance(name_or_info, ModelInfo) else find_model(name_or_info)
    try:
        st = info.path.stat()
    except OSError as exc:
        raise ModelFileError(
            f"cannot read model file ({exc.strerror})", file=str(info.path)
        ) from None
    return _load(str(info.path), info.fmt, info.name, info.title, st.st_mtime_ns, st.st_size)


def model_header(info: ModelInfo):
    """The degree and interval of a model (:class:`geo.model_files.ModelHeader`), read from
    the file's header only (cached while the file is unchanged): listing the models, or
    choosing one for 'auto', does not read every model whole."""
    try:
        st = info.path.stat()
    except OSError as exc:
        raise ModelFileError(
            f"cannot read model file ({exc.strerror})", file=str(info.path)
        ) from None
    return _header(str(info.path), info.fmt, st.st_mtime_ns, st.st_size)


@functools.lru_cache(maxsize=64)
def _header(path: str, fmt: str, mtime_ns: int, size: int):
    from .model_files import read_model_header

    return read_model_header(path, fmt)


def _range_error(year: float, what: str, index: int | None) -> ModelRangeError:
    sep = " " if what.endswith(" or") else "; "
    err = ModelRangeError(f"date {year:.4f} is outside {what}{sep}{REMEDIES}", field="date")
    err.index = index
    return err


#: Under ``auto`` a historical model hands over to IGRF-14 across this interval (decimal
#: years): their Gauss coefficients are blended linearly, the historical model's weight going
#: from 1 at the start to 0 at the end (geo/data/SOURCES.md says why these years).
BLEND_START, BLEND_END = 1900.0, 1910.0
_BLEND_SEP = "+"


def blend_key(historical: str) -> str:
    """The name ``field_at`` resolves for a blend of ``historical`` into the default model."""
    return f"{historical}{_BLEND_SEP}{DEFAULT_MODEL}"


def blend_parts(name: str) -> tuple[str, str] | None:
    """``(historical, default)`` of a blend name (:func:`blend_key`), else ``None``."""
    if _BLEND_SEP not in name:
        return None
    first, second = name.split(_BLEND_SEP, 1)
    return first, second.split(" ", 1)[0]


def blend_weight(year: ArrayLike) -> np.ndarray:
    """Weight of the historical model at ``year`` (1 at :data:`BLEND_START`, 0 at
    :data:`BLEND_END`, linear between; the default model has ``1 - weight``)."""
    y = np.asarray(year, dtype=float)
    return np.clip((BLEND_END - y) / (BLEND_END - BLEND_START), 0.0, 1.0)


def blend_label(key: str, year: float) -> str:
    """The model as every output names it: ``"gufm1+igrf14 (0.40/0.60)"``."""
    w = float(blend_weight(year))
    return f"{key} ({w:.2f}/{1.0 - w:.2f})"


def resolve(name: str, years: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Choose a model for every decimal year.

    Returns ``(names, ok)``: an array of model names (``''`` where none covers the date) and a
    boolean mask of the years that are covered. ``name`` is a model name or ``auto``. Under
    ``auto``, a date in [:data:`BLEND_START`, :data:`BLEND_END`) gets a blend name
    (:func:`blend_key`) when a historical model covering it is installed; a model named
    explicitly is never blended.
    """
    yrs = np.asarray(years, dtype=float)
    names = np.full(yrs.shape, "", dtype=object)
    if name.strip().lower() != AUTO:
        info = find_model(name)
        model = load_model(info)
        ok = (yrs >= model.start) & (yrs < model.end)
        names[ok] = info.name
        return names, ok
    ok = np.zeros(yrs.shape, dtype=bool)
    default = load_model(DEFAULT_MODEL)
    inside = (yrs >= default.start) & (yrs < default.end)
    names[inside] = DEFAULT_MODEL
    ok |= inside
    blending = inside & (yrs < BLEND_END)
    users = None
    if blending.any():
        users = sorted(user_models(), key=lambda i: (i.name != PREFERRED_HISTORICAL, i.name))
        for info in users:
            try:
                head = model_header(info)  # only the header, unless it is used
            except ModelFileError:
                continue  # 'lodeline models' lists it as unreadable
            if head.start <= BLEND_START and head.end >= BLEND_END:
                load_model(info)  # validates the whole file before its name is used
                names[blending] = blend_key(info.name)
                break
    if not ok.all():
        if users is None:
            users = sorted(user_models(), key=lambda i: (i.name != PREFERRED_HISTORICAL, i.name))
        for info in users:
            try:
                head = model_header(info)  # only a model that covers a date is read whole
            except ModelFileError:
                continue  # 'lodeline models' lists it as unreadable
            take = ~ok & (yrs >= head.start) & (yrs < head.end) & (yrs < default.start)
            if take.any():
                load_model(info)  # validates the whole file before its name is used
            names[take] = info.name
            ok |= take
    return names, ok


def require(name: str, years: np.ndarray) -> np.ndarray:
    """Like :func:`resolve` but raise :class:`ModelRangeError` for the first uncovered year.

    The error names the interval(s) available and the remedies; its attribute ``index`` is
    the flat index of the offending point.
    """
    names, ok = resolve(name, years)
    if not ok.all():
        flat = np.flatnonzero(~np.ravel(ok))
        i = int(flat[0])
        year = float(np.ravel(years)[i])
        if name.strip().lower() == AUTO:
            parts = []
            for info in available_models():
                if info.shipped and info.name != DEFAULT_MODEL:
                    continue
                try:
                    m = model_header(info)
                except ModelFileError:
                    continue
                parts.append(f"{info.name} {m.start:.1f}-{m.end:.1f}")
            what = "every model 'auto' can use (" + ", ".join(parts) + ")"
        else:
            m = load_model(name)
            what = (
                f"the interval of {m.name}, {m.start:.1f} to {m.end:.1f} (the end itself "
                "excluded); choose a model that "
                "covers it (see 'lodeline models'), or"
            )
        raise _range_error(year, what, i)
    return names


def install_model(path: str | os.PathLike[str], *, name: str | None = None) -> ModelInfo:
    """Validate a model file and copy it, unchanged, into the user model folder.

    Raises :class:`ModelFileError` for a malformed file and :class:`InputError` for a bad or
    taken name. Returns the installed model's info.
    """
    from .atomic import write_atomic
    from .model_files import default_name, detect_format, read_model_file

    src = Path(path)
    fmt = detect_format(src)
    if name is not None and not name.strip():
        raise InputError("the model name is empty; give --name NAME", field="--name")
    ident = (name or default_name(src)).strip().lower()
    if not _NAME.match(ident):
        raise InputError(
            f"model name '{ident}' must start with a letter and hold only a-z, 0-9, '_' or "
            "'-' (at most 32 characters)",
            field="--name",
        )
    if ident == AUTO:
        raise InputError(
            "'auto' is reserved (it chooses a model by date); choose another --name",
            field="--name",
        )
    if any(i.name == ident for i in shipped_models()):
        raise InputError(
            f"'{ident}' is the name of a shipped model; choose another --name", field="--name"
        )
    for info in user_models():
        if info.name == ident:
            raise InputError(
                f"a model named '{ident}' is installed already ({info.path}); delete that file "
                "or choose another --name",
                field="--name",
            )
    read_model_file(src, name=ident, fmt=fmt)  # validates the whole file
    folder = user_model_dir()
    try:
        folder.mkdir(parents=True, exist_ok=True)
        data = src.read_bytes()
    except OSError as exc:
        raise InputError(f"cannot install into {folder}: {exc.strerror}") from None
    target = folder / f"{ident}.{fmt}"
    write_atomic(target, data, overwrite=False)
    return ModelInfo(ident, ident, fmt, target, False, "user file")
