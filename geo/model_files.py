"""Readers for geomagnetic model files: SHC, WMM COF and the gufm1 authors' text format.

Each reader validates what it reads (degrees, orders, counts, numbers, epochs) and raises
:class:`geo.errors.ModelFileError` naming the file and the line. All readers return a
:class:`geo.synthesis.SphericalHarmonicModel` (Gauss coefficients in nT, Schmidt
semi-normalised, reference radius 6371.2 km, time in decimal years).

Formats
-------
SHC exchange format (as IGRF-14 is published):
    comment lines start with ``#``; the first other line holds ``nmin nmax ntimes order steps
    [start end]``; the next line the ``ntimes`` epochs; then one line per coefficient:
    ``n m value_1 .. value_ntimes`` with m < 0 meaning h_n|m|. Spline order 2 is piecewise
    linear between the epochs; order 1 with a single epoch is a static model (its validity
    interval must then be given as ``start end`` on the parameter line). Other spline orders
    are refused.
WMM coefficient format (WMM2025 degree 12, WMMHR2025 degree 133):
    line 1 ``epoch model-name release-date``; then ``n m g h dg/dt dh/dt`` lines; a line of
    ``9`` characters ends the table. Valid for five years from the epoch (linear in time).
gufm1 text format (Jackson, Jonkers & Walker 2000):
    line 1 a title; then whitespace-separated numbers: nmax, the number of B-splines N, the
    N + 4 knot epochs, and N blocks of nmax (nmax + 2) coefficients (g10, g11, h11, g20, ...).
    Time dependence is a cubic B-spline (order 4); the model is valid from the 4th knot to the
    (N+1)-th knot (1590-1990 for gufm1).
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import ModelFileError
from .synthesis import SphericalHarmonicModel, coefficient_count, coefficient_index

#: Formats understood by :func:`read_model_file`.
FORMATS = ("shc", "cof", "gufm")

#: Bounds on what a model file may hold (a larger file or value is refused, naming the line):
#: the highest degree (the readers' own; WMMHR2025 is degree 133), the file size, and the
#: magnitude of a coefficient. A main-field Gauss coefficient is under 10^5 nT (|g10| is about
#: 3 x 10^4 nT: common practice, IGRF tables) and its yearly change under 10^3 nT/yr (the
#: largest in WMM2025 is about 25 nT/yr).
MAX_DEGREE = 200
MAX_MODEL_BYTES = 32 * 1024 * 1024
MAX_COEFFICIENT_NT = 1.0e5
MAX_RATE_NT_PER_YEAR = 1.0e3

_NAME_OK = re.compile(r"[^a-z0-9]+")


def _fail(path: str, line: int | None, message: str) -> ModelFileError:
    return ModelFileError(message, file=path, line=line)


def _read_bytes(path: str | os.PathLike[str], head: int | None = None) -> bytes:
    from .file_input import FileRefusedError, read_regular_file

    try:
        return read_regular_file(path, MAX_MODEL_BYTES, what="model file", head=head)
    except FileRefusedError as refused:
        raise _fail(str(path), None, f"model file {refused}") from None


def _read_lines(path: str | os.PathLike[str], head: int | None = None) -> tuple[str, list[str]]:
    """The lines of a model file (``head``: of its first ``head`` bytes only)."""
    p = str(path)
    raw = _read_bytes(path, head)
    try:
        text = raw.decode("ascii")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise _fail(p, line, "not a text model file (non-ASCII bytes)") from None
    return p, text.splitlines()


def _number(path: str, line: int, token: str, what: str) -> float:
    try:
        value = float(token.replace("D", "E").replace("d", "e"))
    except ValueError:
        raise _fail(path, line, f"{what} '{token}' is not a number") from None
    if not math.isfinite(value):
        raise _fail(path, line, f"{what} '{token}' is not a finite number")
    return value


def _check_magnitude(
    path: str, values: np.ndarray, lines: np.ndarray, bound: float, what: str
) -> None:
    """Refuse the first value beyond ``bound`` (``lines``: the line of each value)."""
    bad = np.flatnonzero(~(np.abs(values) <= bound))
    if bad.size:
        k = int(bad[0])
        raise _fail(
            path,
            int(lines.flat[k]),
            f"{what} {float(values.flat[k]):.6g} is beyond {bound:.0e} in magnitude: not a "
            "main-field model (refused)",
        )


def _integer(path: str, line: int, token: str, what: str) -> int:
    try:
        return int(token)
    except ValueError:
        raise _fail(path, line, f"{what} '{token}' is not an integer") from None


def default_name(path: str | os.PathLike[str]) -> str:
    """Model identifier derived from a file name: lower case letters and digits."""
    stem = Path(path).name.split(".")[0]
    return _NAME_OK.sub("", stem.lower()) or "model"


# --------------------------------------------------------------------------------------- SHC


def read_shc(
    path: str | os.PathLike[str], *, name: str | None = None, title: str | None = None
) -> SphericalHarmonicModel:
    """Read a model in the SHC exchange format (see the module docstring)."""
    p, lines = _read_lines(path)
    comments: list[str] = []
    params_line = None
    for i, text in enumerate(lines, 1):
        s = text.strip()
        if not s:
            continue
        if s.startswith("#"):
            comments.append(s.lstrip("#").strip())
            continue
        params_line = i
        break
    if params_line is None:
        raise _fail(p, len(lines) or None, "no parameter line (nmin nmax ntimes order steps)")
    tokens = lines[params_line - 1].split()
    if len(tokens) < 5:
        raise _fail(
            p, params_line, "parameter line needs at least 5 numbers: nmin nmax ntimes order steps"
        )
    nmin, nmax, ntimes, order, _steps = (
        _integer(p, params_line, t, w)
        for t, w in zip(
            tokens[:5], ("nmin", "nmax", "ntimes", "spline order", "steps"), strict=True
        )
    )
    span = None
    if len(tokens) >= 7:
        span = (
            _number(p, params_line, tokens[5], "start year"),
            _number(p, params_line, tokens[6], "end year"),
        )
    if not 1 <= nmin <= nmax <= MAX_DEGREE:
        raise _fail(
            p,
            params_line,
            f"degrees nmin={nmin}, nmax={nmax} must satisfy 1<=nmin<=nmax<={MAX_DEGREE}",
        )
    if not 1 <= ntimes <= 1000:
        raise _fail(p, params_line, f"ntimes={ntimes} must be 1..1000")
    if order == 2 and ntimes < 2:
        raise _fail(p, params_line, "spline order 2 (piecewise linear) needs at least 2 epochs")
    if order == 1 and ntimes != 1:
        raise _fail(
            p, params_line, "spline order 1 is read only for a single epoch (a static model)"
        )
    if order not in (1, 2):
        raise _fail(
            p,
            params_line,
            f"spline order {order} is not supported (orders 1 and 2, piecewise linear, are)",
        )
    # epochs line
    i = params_line
    while i < len(lines) and not lines[i].strip():
        i += 1
    if i >= len(lines):
        raise _fail(p, len(lines), "file ends before the line of epochs")
    epoch_line = i + 1
    etoks = lines[i].split()
    if len(etoks) != ntimes:
        raise _fail(p, epoch_line, f"expected {ntimes} epochs, found {len(etoks)}")
    epochs = np.array([_number(p, epoch_line, t, "epoch") for t in etoks])
    if ntimes > 1 and not np.all(np.diff(epochs) > 0):
        raise _fail(p, epoch_line, "epochs must increase strictly")
    kcount = coefficient_count(nmax)
    table = np.zeros((ntimes, kcount))
    seen: dict[int, int] = {}
    for j in range(epoch_line, len(lines)):
        s = lines[j].strip()
        if not s or s.startswith("#"):
            continue
        ln = j + 1
        toks = s.split()
        if len(toks) != ntimes + 2:
            raise _fail(p, ln, f"expected n, m and {ntimes} values, found {len(toks)} fields")
        n = _integer(p, ln, toks[0], "degree n")
        m = _integer(p, ln, toks[1], "order m")
        if not nmin <= n <= nmax:
            raise _fail(p, ln, f"degree n={n} is outside {nmin}..{nmax}")
        if abs(m) > n:
            raise _fail(p, ln, f"order m={m} exceeds degree n={n}")
        k = coefficient_index(n, abs(m), "h" if m < 0 else "g")
        if k in seen:
            raise _fail(p, ln, f"coefficient n={n} m={m} repeats line {seen[k]}")
        seen[k] = ln
        table[:, k] = [_number(p, ln, t, f"coefficient n={n} m={m}") for t in toks[2:]]
    expected = coefficient_count(nmax) - coefficient_count(nmin - 1)
    if len(seen) != expected:
        missing = next(
            (n, m)
            for n in range(nmin, nmax + 1)
            for m in range(-n, n + 1)
            if coefficient_index(n, abs(m), "h" if m < 0 else "g") not in seen
        )
        raise _fail(
            p,
            len(lines),
            f"{expected - len(seen)} coefficient line(s) missing (first: n={missing[0]} "
            f"m={missing[1]})",
        )
    line_of = np.zeros(kcount, dtype=int)
    for k, ln in seen.items():
        line_of[k] = ln
    _check_magnitude(
        p, table, np.broadcast_to(line_of, table.shape), MAX_COEFFICIENT_NT, "coefficient"
    )
    if ntimes == 1:
        if span is None or not span[1] > span[0]:
            raise _fail(p, params_line, "a single-epoch model must give its validity 'start end'")
        breaks = np.array(span)
        coeffs = table[None, :, :]  # constant in time
    else:
        breaks = epochs
        dt = np.diff(epochs)[:, None]
        coeffs = np.stack([table[:-1], np.diff(table, axis=0) / dt], axis=1)
    ident = name or default_name(p)
    meta = {"format": "shc", "nmin": nmin, "comments": comments, "epochs": epochs.tolist()}
    return SphericalHarmonicModel(
        name=ident,
        title=title or (comments[0] if comments else ident),
        nmax=nmax,
        breaks=breaks,
        coeffs=coeffs,
        source=p,
        meta=meta,
    )


# --------------------------------------------------------------------------------------- COF


def read_cof(
    path: str | os.PathLike[str], *, name: str | None = None, title: str | None = None
) -> SphericalHarmonicModel:
    """Read a model in the WMM coefficient (COF) format (see the module docstring)."""
    p, lines = _read_lines(path)
    head_idx = next((i for i, t in enumerate(lines) if t.strip()), None)
    if head_idx is None:
        raise _fail(p, None, "empty model file")
    head = lines[head_idx].split()
    hl = head_idx + 1
    if len(head) < 2:
        raise _fail(p, hl, "header must be 'epoch model-name [release-date]'")
    epoch = _number(p, hl, head[0], "epoch")
    if not 1000.0 <= epoch <= 3000.0:
        raise _fail(p, hl, f"epoch {head[0]} is not a plausible year")
    model_name = head[1]
    release = head[2] if len(head) > 2 else ""
    rows: dict[tuple[int, int], tuple[int, list[float]]] = {}
    ended = False
    for j in range(head_idx + 1, len(lines)):
        s = lines[j].strip()
        ln = j + 1
        if not s:
            continue
        if set(s) == {"9"}:
            ended = True
            break
        toks = s.split()
        if len(toks) != 6:
            raise _fail(p, ln, f"expected 'n m g h dg dh', found {len(toks)} fields")
        n = _integer(p, ln, toks[0], "degree n")
        m = _integer(p, ln, toks[1], "order m")
        if not 1 <= n <= MAX_DEGREE or not 0 <= m <= n:
            raise _fail(
                p,
                ln,
                f"degree/order n={n} m={m} out of range (1<=n<={MAX_DEGREE}, 0<=m<=n)",
            )
        if (n, m) in rows:
            raise _fail(p, ln, f"coefficient n={n} m={m} repeats line {rows[(n, m)][0]}")
        vals = [
            _number(p, ln, t, w)
            for t, w in zip(toks[2:], ("g", "h", "dg/dt", "dh/dt"), strict=True)
        ]
        if m == 0 and (vals[1] != 0.0 or vals[3] != 0.0):
            raise _fail(p, ln, f"h and dh/dt must be 0 for m=0 (n={n})")
        lns = np.array([ln, ln])
        _check_magnitude(p, np.array(vals[:2]), lns, MAX_COEFFICIENT_NT, f"coefficient n={n} m={m}")
        _check_magnitude(
            p, np.array(vals[2:]), lns, MAX_RATE_NT_PER_YEAR, f"yearly change n={n} m={m}"
        )
        rows[(n, m)] = (ln, vals)
    if not ended:
        raise _fail(p, len(lines), "missing the closing line of 9s (file truncated?)")
    if not rows:
        raise _fail(p, hl + 1, "no coefficient lines")
    nmax = max(n for n, _ in rows)
    for n in range(1, nmax + 1):
        for m in range(n + 1):
            if (n, m) not in rows:
                raise _fail(p, len(lines), f"coefficient n={n} m={m} is missing")
    kcount = coefficient_count(nmax)
    coeffs = np.zeros((1, 2, kcount))
    for (n, m), (_ln, (g, h, dg, dh)) in rows.items():
        kg = coefficient_index(n, m, "g")
        coeffs[0, 0, kg] = g
        coeffs[0, 1, kg] = dg
        if m:
            kh = coefficient_index(n, m, "h")
            coeffs[0, 0, kh] = h
            coeffs[0, 1, kh] = dh
    ident = name or _NAME_OK.sub("", model_name.lower()) or default_name(p)
    return SphericalHarmonicModel(
        name=ident,
        title=title or model_name,
        nmax=nmax,
        breaks=np.array([epoch, epoch + 5.0]),
        coeffs=coeffs,
        source=p,
        meta={"format": "cof", "release": release, "epoch": epoch},
    )


# ------------------------------------------------------------------------------------- gufm1


def bspline_basis(knots: np.ndarray, order: int, x: np.ndarray, deriv: int = 0) -> np.ndarray:
    """Values (or ``deriv``-th derivatives) of all B-splines of ``order`` at ``x``.

    Cox-de Boor recursion on the full knot vector ``knots`` (non-decreasing); the basis is
    right-continuous. Returns shape (len(x), len(knots) - order).
    """
    t = np.asarray(knots, dtype=float)
    x = np.atleast_1d(np.asarray(x, dtype=float))
    if deriv > 0:
        lower = bspline_basis(t, order - 1, x, deriv - 1)
        k = order - 1
        nb = len(t) - order
        left = np.zeros(nb)
        right = np.zeros(nb)
        for j in range(nb):
            d1 = t[j + k] - t[j]
            d2 = t[j + k + 1] - t[j + 1]
            left[j] = k / d1 if d1 > 0 else 0.0
            right[j] = k / d2 if d2 > 0 else 0.0
        return lower[:, :-1] * left - lower[:, 1:] * right
    b = ((t[:-1][None, :] <= x[:, None]) & (x[:, None] < t[1:][None, :])).astype(float)
    for k in range(2, order + 1):
        nb = len(t) - k
        new = np.zeros((x.size, nb))
        for j in range(nb):
            d1 = t[j + k - 1] - t[j]
            d2 = t[j + k] - t[j + 1]
            if d1 > 0:
                new[:, j] += (x - t[j]) / d1 * b[:, j]
            if d2 > 0:
                new[:, j] += (t[j + k] - x) / d2 * b[:, j + 1]
        b = new
    return b


def bspline_to_piecewise(
    knots: np.ndarray, order: int, spline_coeffs: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Convert a B-spline time series to piecewise-polynomial (Taylor) form.

    ``spline_coeffs`` has shape (N, K) for N = len(knots) - order splines. Returns
    ``(breaks, coeffs)``: the distinct knots from knots[order-1] to knots[N] and coeffs of
    shape (S, order, K) with the polynomial in powers of (t - breaks[j]).
    """
    nspl = len(knots) - order
    inner = np.unique(knots[order - 1 : nspl + 1])
    left = inner[:-1]
    pp = np.empty((left.size, order, spline_coeffs.shape[1]))
    factorial = 1.0
    for p in range(order):
        if p:
            factorial *= p
        pp[:, p, :] = bspline_basis(knots, order, left, deriv=p) @ spline_coeffs / factorial
    return inner, pp


def read_gufm(
    path: str | os.PathLike[str], *, name: str | None = None, title: str | None = None
) -> SphericalHarmonicModel:
    """Read the gufm1 authors' text format (see the module docstring)."""
    p, lines = _read_lines(path)
    if not lines or not lines[0].strip():
        raise _fail(p, 1, "line 1 must hold the model title")
    head_title = lines[0].strip()
    counts = [len(text.split()) for text in lines[1:]]
    where = np.repeat(np.arange(2, len(lines) + 1), counts)  # line number of each value
    try:
        values = np.array(" ".join(lines[1:]).split(), dtype=float)
    except ValueError:
        values = None
    if values is None or not np.isfinite(values).all():
        for j in range(1, len(lines)):  # find and name the offending line
            for tok in lines[j].split():
                _number(p, j + 1, tok, "value")
        values = np.array(" ".join(lines[1:]).replace("D", "E").split(), dtype=float)
    if len(values) < 2:
        raise _fail(p, 2, "line 2 must start with nmax and the number of B-splines")
    nmax_f, nspl_f = values[0], values[1]
    if nmax_f != int(nmax_f) or not 1 <= nmax_f <= MAX_DEGREE:
        raise _fail(p, int(where[0]), f"nmax {nmax_f:g} must be an integer in 1..{MAX_DEGREE}")
    if nspl_f != int(nspl_f) or nspl_f < 4:
        raise _fail(p, int(where[1]), f"number of B-splines {nspl_f:g} must be an integer >= 4")
    nmax, nspl = int(nmax_f), int(nspl_f)
    order = 4
    nknots = nspl + order
    kcount = coefficient_count(nmax)
    expected = 2 + nknots + nspl * kcount
    if len(values) != expected:
        line = int(where[expected]) if len(values) > expected else len(lines)
        raise _fail(
            p,
            line,
            f"expected {nknots} knots and {nspl}x{kcount} coefficients "
            f"({expected - 2} numbers after nmax and N), found {len(values) - 2}",
        )
    knots = values[2 : 2 + nknots].copy()
    bad = np.flatnonzero(np.diff(knots) < 0)
    if bad.size:
        raise _fail(p, int(where[2 + bad[0] + 1]), "knot epochs must not decrease")
    if not knots[order - 1] < knots[nspl]:
        raise _fail(p, int(where[2]), "the knots give an empty interval of validity")
    spl = values[2 + nknots :].reshape(nspl, kcount)
    _check_magnitude(
        p, spl, where[2 + nknots :].reshape(spl.shape), MAX_COEFFICIENT_NT, "coefficient"
    )
    breaks, pp = bspline_to_piecewise(knots, order, spl)
    ident = name or default_name(p)
    head = head_title.split()
    model_title = head[-1] if head and head[0].lower() == "model" and len(head) > 1 else head_title
    return SphericalHarmonicModel(
        name=ident,
        title=title or model_title,
        nmax=nmax,
        breaks=breaks,
        coeffs=pp,
        source=p,
        meta={"format": "gufm", "knots": knots.tolist(), "order": order},
    )


# ----------------------------------------------------------------------------------- sniffing


def detect_format(path: str | os.PathLike[str]) -> str:
    """Tell which of :data:`FORMATS` a file is written in (by its extension, then content)."""
    suffix = Path(path).suffix.lower()
    if suffix == ".shc":
        return "shc"
    if suffix == ".cof":
        return "cof"
    p, lines = _read_lines(path)
    content = [(i + 1, t.split()) for i, t in enumerate(lines) if t.strip()]
    if not content:
        raise _fail(p, None, "empty model file")
    first_line, first = content[0]
    if first[0].startswith("#"):
        return "shc"

    def numeric(tok: str) -> bool:
        try:
            float(tok.replace("D", "E"))
        except ValueError:
            return False
        return True

    if all(numeric(t) for t in first):
        if len(first) >= 5 and all(re.fullmatch(r"[+-]?\d+", t) for t in first[:5]):
            return "shc"
        raise _fail(p, first_line, "cannot tell the model format (give a .shc or .cof file)")
    if numeric(first[0]) and len(content) > 1 and len(content[1][1]) == 6:
        return "cof"
    if len(content) > 1 and len(content[1][1]) >= 2 and all(numeric(t) for t in content[1][1]):
        return "gufm"
    raise _fail(p, first_line, "cannot tell the model format (SHC, WMM COF or gufm1 text)")


def read_model_file(
    path: str | os.PathLike[str],
    *,
    name: str | None = None,
    title: str | None = None,
    fmt: str | None = None,
) -> SphericalHarmonicModel:
    """Read a model file in any supported format (``fmt`` one of :data:`FORMATS`, or sniffed)."""
    kind = fmt or detect_format(path)
    reader = {"shc": read_shc, "cof": read_cof, "gufm": read_gufm}.get(kind)
    if reader is None:
        raise _fail(str(path), None, f"unknown model format '{kind}' (known: {', '.join(FORMATS)})")
    return reader(path, name=name, title=title)


# ------------------------------------------------------------------------------------ headers


@dataclass(frozen=True)
class ModelHeader:
    """What a model file says of itself before its coefficients: degree and interval."""

    nmax: int
    start: float
    end: float


#: Bytes read for a header: the parameter and epoch lines of an SHC file, the title, counts
#: and knots of a gufm1 file; the degree of a COF file is on its last coefficient line.
_HEAD_BYTES = 64 * 1024


def read_model_header(path: str | os.PathLike[str], fmt: str) -> ModelHeader:
    """The degree and validity interval of a model file, read from its first (and for COF
    its last) few kilobytes, not from the whole file. The full reader validates the rest.
    Raises :class:`ModelFileError` naming the file."""
    p = str(path)
    try:
        if fmt == "shc":
            return _shc_header(p)
        if fmt == "cof":
            return _cof_header(p)
        if fmt == "gufm":
            return _gufm_header(p)
    except (ValueError, IndexError):
        pass
    raise _fail(p, None, f"cannot read the {fmt} model header")


def _shc_header(p: str) -> ModelHeader:
    _, lines = _read_lines(p, head=_HEAD_BYTES)
    content = [t.split() for t in lines if t.strip() and not t.strip().startswith("#")]
    params, epochs = content[0], [float(t) for t in content[1]]
    if int(params[2]) == 1:
        return ModelHeader(int(params[1]), float(params[5]), float(params[6]))
    return ModelHeader(int(params[1]), epochs[0], epochs[-1])


def _cof_header(p: str) -> ModelHeader:
    from .file_input import FileRefusedError, read_tail

    _, lines = _read_lines(p, head=4096)
    epoch = float(next(t for t in lines if t.strip()).split()[0])
    try:
        tail = read_tail(p, 4096).decode("ascii", "replace").splitlines()
    except FileRefusedError as refused:
        raise _fail(p, None, f"model file {refused}") from None
    rows = [t.split() for t in tail if t.strip() and set(t.strip()) != {"9"}]
    return ModelHeader(int(rows[-1][0]), epoch, epoch + 5.0)


def _gufm_header(p: str) -> ModelHeader:
    _, lines = _read_lines(p, head=_HEAD_BYTES)
    numbers = " ".join(lines[1:-1]).replace("D", "E").split()
    nmax, nspl = int(float(numbers[0])), int(float(numbers[1]))
    knots = [float(t) for t in numbers[2 : 2 + nspl + 4]]
    return ModelHeader(nmax, knots[3], knots[nspl])
