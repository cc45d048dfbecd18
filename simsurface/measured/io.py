"""Import of measured magnetotransport curves from delimited text.

A data file is a table with one row per field point: comma-, tab- or whitespace-separated, lines that
start with ``#`` are comments. Comment lines of the form ``# key = value`` (or ``# key: value``) are
metadata, e.g. ``# temperature_K = 1.8``, ``# gate_V = -2``, ``# sample = QX-23``.

The first non-comment line is a header when it is not all numbers. Column names carry a quantity and a
unit, written ``B (T)``, ``B [mT]``, ``field_T``, ``R/kOhm`` or ``R_kohm``:

========== ============================================ ==========================================
quantity   names (case-insensitive)                     units
========== ============================================ ==========================================
field      B, field, B_field, Bz, B_axial, ...          T, mT, G (gauss), kG
resistance R, resistance, Rxx, R2t, R4t, ...            ohm (Ω), kohm (kΩ), Mohm (MΩ)
conductance G, conductance, Gxx, G2t, ...               S, mS, uS (µS), e2/h (e^2/h, e²/h)
voltage    V, U, voltage, Vxx, ...                      V, mV, uV (µV), nV
current    I, current, Ixx, ...                         A, mA, uA (µA), nA, pA
temperature T, temperature, temp                        K, mK (its mean becomes ``temperature_K``)
========== ============================================ ==========================================

A voltage and a current column give R = V/I. Columns can be named explicitly (by header name or
1-based index) with :class:`ColumnSpec`; a file without a header needs the columns and their units
there. Rows with a missing (empty or ``nan``) field or signal are dropped and counted; text in a numeric
column is an error that names the line and the column.
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np
import xarray as xr

from ..errors import InputError
from ..units import CONDUCTANCE_QUANTUM_S

#: unit string (normalized: lowercase, µ -> u, Ω -> ohm, no spaces) -> factor to the base unit
UNITS: dict[str, dict[str, float]] = {
    "field": {"t": 1.0, "tesla": 1.0, "mt": 1e-3, "g": 1e-4, "gauss": 1e-4, "kg": 0.1},
    "resistance": {"ohm": 1.0, "kohm": 1e3, "mohm": 1e6, "milliohm": 1e-3},
    "conductance": {"s": 1.0 / CONDUCTANCE_QUANTUM_S, "ms": 1e-3 / CONDUCTANCE_QUANTUM_S,
                    "us": 1e-6 / CONDUCTANCE_QUANTUM_S, "e2/h": 1.0, "e^2/h": 1.0, "e2h": 1.0},
    "voltage": {"v": 1.0, "mv": 1e-3, "uv": 1e-6, "nv": 1e-9},
    "current": {"a": 1.0, "ma": 1e-3, "ua": 1e-6, "na": 1e-9, "pa": 1e-12},
    "temperature": {"k": 1.0, "mk": 1e-3},
}
#: base unit of each quantity after import
BASE_UNITS = {"field": "T", "resistance": "ohm", "conductance": "e^2/h", "voltage": "V", "current": "A",
              "temperature": "K"}
#: name of the signal variable in an imported Dataset, per quantity
SIGNAL_NAMES = {"resistance": "resistance_ohm", "conductance": "conductance_e2h"}

_KIND_PATTERNS = [
    ("field", r"(b|field|bfield|magneticfield|b(axial|ext|par|parallel|[xyz]))"),
    ("resistance", r"(resistance\w*|r(xx|yy|2t|4t|2p|4p|2pt|4pt|\d*))"),
    ("conductance", r"(conductance\w*|g(xx|yy|2t|4t|2p|4p|2pt|4pt|\d*))"),
    ("voltage", r"(voltage\w*|[vu](xx|yy|2t|4t|\d*))"),
    ("current", r"(current\w*|i(xx|\d*))"),
    ("temperature", r"(t|temp|temperature)"),
]
_NUMBER_WORDS = {"nan", "na", "n/a", "", "-", "none", "null"}


@dataclass(frozen=True)
class ColumnSpec:
    """Which columns hold the field and the signal, and their units, when the header does not say.

    Columns are header names (exact, or the quantity part of the name) or 1-based indices given as
    strings or ints. Units override those in the header. The signal is a resistance or a conductance
    column, or a voltage and a current column (R = V/I).
    """

    field: str | int | None = None
    field_unit: str | None = None
    signal: str | int | None = None
    signal_unit: str | None = None
    voltage: str | int | None = None
    voltage_unit: str | None = None
    current: str | int | None = None
    current_unit: str | None = None

    def merged(self, other: "ColumnSpec") -> "ColumnSpec":
        """This spec with the fields that ``other`` sets replaced by ``other``'s values."""
        changes = {k: v for k, v in vars(other).items() if v is not None}
        return replace(self, **changes)


@dataclass(frozen=True)
class _Column:
    index: int
    header: str
    kind: str | None
    unit: str | None


def normalize_unit(unit: str) -> str:
    """Lower-case a unit and spell it in ASCII (µ -> u, Ω -> ohm, ² -> 2, no spaces)."""
    u = unit.strip().replace("µ", "u").replace("μ", "u").replace("Ω", "ohm").replace("²", "2")
    u = u.replace(" ", "").lower()
    return re.sub(r"ohms$", "ohm", u)


def unit_factor(kind: str, unit: str, what: str) -> float:
    """Factor that converts a value in ``unit`` to the base unit of ``kind`` (see :data:`BASE_UNITS`)."""
    table = UNITS[kind]
    norm = normalize_unit(unit)
    if kind == "resistance" and unit.strip().startswith("m") and norm == "mohm":
        norm = "milliohm"  # lower-case m is milli, upper-case M is mega
    if norm not in table:
        allowed = ", ".join(sorted({_pretty(k) for k in table}))
        raise InputError(f"{what}: unit {unit!r} is not allowed for a {kind}; use one of {allowed}")
    return table[norm]


def _pretty(norm: str) -> str:
    return {"t": "T", "mt": "mT", "g": "G", "kg": "kG", "s": "S", "ms": "mS", "us": "uS", "v": "V",
            "mv": "mV", "uv": "uV", "nv": "nV", "a": "A", "ma": "mA", "ua": "uA", "na": "nA", "pa": "pA",
            "k": "K", "mk": "mK"}.get(norm, norm)


def _any_unit(text: str) -> bool:
    norm = normalize_unit(text)
    return any(norm in table for table in UNITS.values())


def split_name(header: str) -> tuple[str, str | None]:
    """Split a column header into (quantity name, unit or None).

    Accepts ``B (T)``, ``B [T]``, ``B/T`` and ``B_T`` (the suffix only when it is a unit).
    """
    h = header.strip().strip('"').strip("'").strip()
    m = re.fullmatch(r"(.*?)\s*[\(\[]\s*([^\)\]]*)\s*[\)\]]", h)
    if m:
        return m.group(1).strip(), m.group(2).strip()
    m = re.fullmatch(r"([^/]+?)\s*/\s*(.+)", h)
    if m and _any_unit(m.group(2)):
        return m.group(1).strip(), m.group(2).strip()
    # units written as a suffix: field_T, R_kohm, conductance_e2h, I_nA (longest suffix that is a unit)
    parts = h.split("_")
    for cut in range(1, len(parts)):
        base, unit = "_".join(parts[:cut]), "_".join(parts[cut:])
        if _any_unit(unit):
            return base, unit
    return h, None


def classify(name: str) -> str | None:
    """Quantity of a column from its name (``field``, ``resistance``, ...), or None."""
    key = re.sub(r"[^0-9a-z]", "", name.lower())
    for kind, pattern in _KIND_PATTERNS:
        if re.fullmatch(pattern, key):
            return kind
    return None


def parse_metadata_line(text: str) -> tuple[str, Any] | None:
    """``key = value`` or ``key: value`` from a comment line (without the ``#``); value as number if possible."""
    m = re.fullmatch(r"\s*([A-Za-z][\w\-. ]*?)\s*[=:]\s*(.*?)\s*", text)
    if not m:
        return None
    key = m.group(1).strip().replace(" ", "_")
    raw = m.group(2).strip().strip('"').strip("'")
    if raw.lower() in ("true", "yes"):
        return key, True
    if raw.lower() in ("false", "no"):
        return key, False
    try:
        return key, float(raw)
    except ValueError:
        return key, raw


def split_comments(text: str) -> tuple[dict[str, Any], list[tuple[int, str]]]:
    """Metadata from ``# key = value`` comment lines, and the other non-empty lines with their numbers."""
    meta: dict[str, Any] = {}
    body: list[tuple[int, str]] = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            kv = parse_metadata_line(s.lstrip("#"))
            if kv:
                meta[kv[0]] = kv[1]
            continue
        body.append((lineno, s))
    return meta, body


def _read_text(path: Path) -> str:
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError(f"DATA {path}: file not found") from None
    except OSError as exc:
        raise InputError(f"DATA {path}: cannot be read ({exc.strerror})") from None
    if b"\x00" in raw:
        raise InputError(f"DATA {path}: not a text table (binary content); give delimited text")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        try:
            return raw.decode("latin-1")
        except UnicodeDecodeError:  # pragma: no cover - latin-1 decodes every byte
            raise InputError(f"DATA {path}: not a text table") from None


def _delimiter(lines: list[str]) -> str | None:
    """',' or '\\t' when every data line has it, else None (whitespace)."""
    for delim in (",", "\t", ";"):
        if all(delim in line for line in lines):
            return delim
    return None


def _split(line: str, delim: str | None) -> list[str]:
    if delim is None:
        return line.split()
    return [c.strip() for c in line.split(delim)]


def _to_float(token: str) -> float | None:
    """Number, NaN for a missing value, or None when the token is text."""
    t = token.strip().strip('"').strip("'")
    if t.lower() in _NUMBER_WORDS:
        return math.nan
    try:
        return float(t)
    except ValueError:
        return None


def _header_columns(tokens: list[str], n_cols: int, delim: str | None, path: Path) -> list[str]:
    """Header names; for whitespace tables, glue unit tokens like ``(T)`` to the name before them."""
    if delim is None and len(tokens) != n_cols:
        glued: list[str] = []
        for tok in tokens:
            if glued and re.fullmatch(r"[\(\[].*[\)\]]", tok):
                glued[-1] = f"{glued[-1]} {tok}"
            else:
                glued.append(tok)
        tokens = glued
    if len(tokens) != n_cols:
        raise InputError(f"DATA {path}: the header has {len(tokens)} names but the rows have {n_cols} "
                         "columns; give one name per column")
    return tokens


def _find(columns: list[_Column], ref: str | int, what: str, path: Path) -> _Column:
    """A column by 1-based index or by (full or quantity) name."""
    if isinstance(ref, int) or (isinstance(ref, str) and ref.strip().isdigit()):
        i = int(ref) - 1
        if not 0 <= i < len(columns):
            raise InputError(f"{what}: column {int(ref)} does not exist in {path} "
                             f"(it has {len(columns)} columns, numbered from 1)")
        return columns[i]
    for c in columns:
        if c.header.strip() == ref.strip():
            return c
    matches = [c for c in columns if split_name(c.header)[0].lower() == ref.strip().lower()]
    if len(matches) == 1:
        return matches[0]
    names = ", ".join(repr(c.header) for c in columns) or "(no header)"
    raise InputError(f"{what}: no column named {ref!r} in {path}; the columns are {names}")


def _auto_pick(columns: list[_Column], kind: str) -> list[_Column]:
    return [c for c in columns if c.kind == kind]


def read_table(path: str | Path, columns: ColumnSpec | None = None,
               metadata: dict[str, Any] | None = None) -> xr.Dataset:
    """Read one measured curve.

    Parameters
    ----------
    path : str or Path
        Delimited text file (see the module docstring for the format).
    columns : ColumnSpec, optional
        Columns and units that override or complete the header.
    metadata : dict, optional
        Values that override the file's ``# key = value`` metadata (e.g. ``temperature_K``).

    Returns
    -------
    xarray.Dataset
        Dimension ``point`` in file order (rows with missing values dropped). Variables ``field_T`` and
        either ``resistance_ohm`` or ``conductance_e2h``; ``sweep`` (+1 field rising, −1 falling).
        Attributes: ``source``, ``quantity``, ``field_column``, ``signal_column``, ``dropped_rows``,
        ``metadata`` (dict from the header comments, updated by ``metadata``).
    """
    path = Path(path)
    spec = columns or ColumnSpec()
    meta, body = split_comments(_read_text(path))
    if not body:
        raise InputError(f"DATA {path}: no data rows (empty file or comments only)")

    delim = _delimiter([s for _, s in body[1:]] or [body[0][1]])
    first = _split(body[0][1], delim)
    has_header = any(_to_float(t) is None for t in first)
    rows = body[1:] if has_header else body
    if not rows:
        raise InputError(f"DATA {path}: a header but no data rows")
    n_cols = len(_split(rows[0][1], delim))
    if n_cols < 2:
        raise InputError(f"DATA {path}: only one column; a curve needs a field column and a signal column "
                         "(comma-, tab- or whitespace-separated)")
    names = _header_columns(first, n_cols, delim, path) if has_header else [""] * n_cols
    cols = []
    for i, name in enumerate(names):
        base, unit = split_name(name) if name else ("", None)
        cols.append(_Column(i, name or f"column {i + 1}", classify(base) if base else None, unit))

    values = np.full((len(rows), n_cols), np.nan)
    for r, (lineno, line) in enumerate(rows):
        tokens = _split(line, delim)
        if len(tokens) != n_cols:
            raise InputError(f"DATA {path}, line {lineno}: {len(tokens)} columns where the table has {n_cols}")
        for c, tok in enumerate(tokens):
            v = _to_float(tok)
            if v is None:
                raise InputError(f"DATA {path}, line {lineno}, column {cols[c].header!r}: {tok!r} is not a number")
            values[r, c] = v

    where = f"DATA {path}"
    # field column
    if spec.field is not None:
        fcol = _find(cols, spec.field, "--field-column", path)
    else:
        cands = _auto_pick(cols, "field")
        if not has_header:
            fcol = cols[0]
        elif len(cands) != 1:
            raise InputError(f"{where}: {'no' if not cands else 'more than one'} field column recognized in the "
                             "header (names like 'B (T)' or 'field_mT'); name it with --field-column")
        else:
            fcol = cands[0]
    funit = spec.field_unit or fcol.unit
    if funit is None:
        raise InputError(f"{where}: the field column {fcol.header!r} has no unit; give it in the header "
                         "('B (T)') or with --field-unit (T, mT or G)")
    field_T = values[:, fcol.index] * unit_factor("field", funit, f"{where}, field column {fcol.header!r}")

    # signal: resistance / conductance column, or voltage and current
    used = {fcol.index}
    if spec.voltage is not None or spec.current is not None:
        signal, quantity, sig_desc = _from_voltage_current(cols, values, spec, path, used)
    elif spec.signal is not None:
        scol = _find(cols, spec.signal, "--signal-column", path)
        signal, quantity, sig_desc = _signal_column(scol, values, spec.signal_unit, path)
    else:
        cands = [c for c in cols if c.kind in ("resistance", "conductance") and c.index not in used]
        if not has_header:
            if n_cols < 2 or spec.signal_unit is None:
                raise InputError(f"{where}: no header; name the columns and units with --field-unit and "
                                 "--signal-unit (field in column 1, signal in column 2 unless "
                                 "--field-column/--signal-column say otherwise)")
            scol = cols[1]
            signal, quantity, sig_desc = _signal_column(scol, values, spec.signal_unit, path)
        elif len(cands) == 1:
            signal, quantity, sig_desc = _signal_column(cands[0], values, spec.signal_unit, path)
        elif not cands and _auto_pick(cols, "voltage") and _auto_pick(cols, "current"):
            signal, quantity, sig_desc = _from_voltage_current(cols, values, spec, path, used)
        else:
            found = ", ".join(repr(c.header) for c in cands) or "none"
            raise InputError(f"{where}: cannot tell which column is the signal (resistance or conductance "
                             f"columns recognized: {found}); name it with --signal-column")

    # temperature column -> metadata (mean), unless the metadata already says
    tcols = [c for c in cols if c.kind == "temperature" and c.unit and c.index not in used]
    if tcols and "temperature_K" not in meta:
        t = values[:, tcols[0].index] * unit_factor("temperature", tcols[0].unit, f"{where}, temperature column")
        if np.isfinite(t).any():
            meta["temperature_K"] = float(np.nanmean(t))
    meta.update(metadata or {})

    ok = np.isfinite(field_T) & np.isfinite(signal)
    if quantity == "resistance":
        ok &= signal != 0  # a zero resistance cannot be converted; treat like a missing value
    n_bad = int((~ok).sum())
    field_T, signal = field_T[ok], signal[ok]
    if field_T.size == 0:
        raise InputError(f"{where}: no row has both a field and a signal value")
    sweep = sweep_direction(field_T)
    name = SIGNAL_NAMES[quantity]
    ds = xr.Dataset(
        {"field_T": ("point", field_T, {"units": "T", "long_name": "axial magnetic field"}),
         name: ("point", signal, {"units": BASE_UNITS[quantity], "long_name": quantity}),
         "sweep": ("point", sweep, {"units": "1", "long_name": "sweep direction (+1 up, -1 down)"})},
        attrs={"source": str(path), "quantity": quantity, "field_column": fcol.header,
               "signal_column": sig_desc, "dropped_rows": n_bad, "metadata": meta})
    return ds


def _signal_column(col: _Column, values: np.ndarray, unit_override: str | None, path: Path):
    unit = unit_override or col.unit
    what = f"DATA {path}, signal column {col.header!r}"
    if unit is None:
        raise InputError(f"{what}: no unit; give it in the header ('R (Ohm)', 'G (e2/h)') or with --signal-unit")
    kind = None
    for k in ("resistance", "conductance"):
        if normalize_unit(unit) in UNITS[k]:
            kind = k
    if kind is None:
        raise InputError(f"{what}: unit {unit!r} is neither a resistance unit (ohm, kohm, Mohm) nor a "
                         "conductance unit (S, mS, uS, e2/h)")
    if col.kind in ("resistance", "conductance") and col.kind != kind and unit_override is None:
        raise InputError(f"{what}: the name says {col.kind} but the unit {unit!r} is a {kind} unit")
    return values[:, col.index] * unit_factor(kind, unit, what), kind, col.header


def _from_voltage_current(cols, values, spec: ColumnSpec, path: Path, used: set[int]):
    where = f"DATA {path}"
    picked = []
    for kind, ref, unit in (("voltage", spec.voltage, spec.voltage_unit), ("current", spec.current, spec.current_unit)):
        if ref is not None:
            col = _find(cols, ref, f"--{kind}-column", path)
        else:
            cands = [c for c in _auto_pick(cols, kind) if c.index not in used]
            if len(cands) != 1:
                raise InputError(f"{where}: {'no' if not cands else 'more than one'} {kind} column recognized; "
                                 f"name it with --{kind}-column")
            col = cands[0]
        u = unit or col.unit
        if u is None:
            raise InputError(f"{where}: the {kind} column {col.header!r} has no unit; give it with --{kind}-unit")
        picked.append(values[:, col.index] * unit_factor(kind, u, f"{where}, {kind} column {col.header!r}"))
        used.add(col.index)
    v, i = picked
    with np.errstate(divide="ignore", invalid="ignore"):
        r = np.where(i != 0, v / i, np.nan)
    return r, "resistance", "V/I"


def sweep_direction(field_T: np.ndarray) -> np.ndarray:
    """+1 where the field rises along the file, −1 where it falls (int8, same shape)."""
    if field_T.size < 2:
        return np.zeros(field_T.shape, np.int8)
    d = np.sign(np.gradient(field_T)).astype(np.int8)
    # a point where the field stalls inherits the direction before it
    for i in range(1, d.size):
        if d[i] == 0:
            d[i] = d[i - 1]
    return d


def count_sweeps(sweep: np.ndarray, min_points: int = 5) -> int:
    """Number of monotonic sweeps (runs of one direction at least ``min_points`` long)."""
    if sweep.size == 0:
        return 0
    edges = np.flatnonzero(np.diff(sweep) != 0) + 1
    runs = np.diff(np.concatenate([[0], edges, [sweep.size]]))
    return int(max(1, (runs >= min_points).sum()))


# --- series manifest --------------------------------------------------------------------------------

@dataclass(frozen=True)
class SeriesEntry:
    """One file of a series with its metadata."""

    path: Path
    metadata: dict[str, Any] = field(default_factory=dict)
    reciprocal: Path | None = None


@dataclass(frozen=True)
class Series:
    """A set of curves of one sample: files, their metadata, the sample's nominal dimensions."""

    entries: tuple[SeriesEntry, ...]
    sample: dict[str, Any] = field(default_factory=dict)
    columns: ColumnSpec = ColumnSpec()


_SAMPLE_KEYS = {"name", "shape", "width_nm", "thickness_nm", "depth_nm", "size_uncertainty_nm", "expected_period_T",
                "perimeter_nm"}
_COLUMN_KEYS = set(vars(ColumnSpec()))


def read_manifest(path: str | Path) -> Series:
    """Read a TOML manifest of a series of files.

    Layout::

        [sample]                 # optional: name, shape, width_nm, thickness_nm, depth_nm,
                                 # size_uncertainty_nm, expected_period_T, perimeter_nm
        name = "QX-23"
        shape = "rectangle"
        width_nm = 150
        thickness_nm = 40

        [columns]                # optional: as ColumnSpec (field, field_unit, signal, signal_unit, ...)
        field = "B (T)"

        [[file]]                 # one per curve; path relative to the manifest
        path = "QX-23_1p5K.csv"
        temperature_K = 1.5      # any other key is metadata (gate_V, ...); reciprocal = "partner file"
    """
    path = Path(path)
    try:
        doc = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"--manifest {path}: file not found") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"--manifest {path}: not valid TOML ({exc})") from None
    unknown = set(doc) - {"sample", "columns", "file"}
    if unknown:
        raise InputError(f"--manifest {path}: unknown table(s) {', '.join(sorted(unknown))}; "
                         "allowed are [sample], [columns] and [[file]]")
    sample = dict(doc.get("sample", {}))
    bad = set(sample) - _SAMPLE_KEYS
    if bad:
        raise InputError(f"--manifest [sample] {sorted(bad)[0]}: unknown field; allowed are {', '.join(sorted(_SAMPLE_KEYS))}")
    cols = dict(doc.get("columns", {}))
    bad = set(cols) - _COLUMN_KEYS
    if bad:
        raise InputError(f"--manifest [columns] {sorted(bad)[0]}: unknown field; allowed are {', '.join(sorted(_COLUMN_KEYS))}")
    files = doc.get("file", [])
    if not isinstance(files, list) or not files:
        raise InputError(f"--manifest {path}: needs at least one [[file]] table with a path")
    entries = []
    for k, f in enumerate(files, start=1):
        if "path" not in f:
            raise InputError(f"--manifest [[file]] number {k}: path is missing")
        meta = {key: v for key, v in f.items() if key not in ("path", "reciprocal")}
        rec = path.parent / f["reciprocal"] if "reciprocal" in f else None
        entries.append(SeriesEntry(path.parent / f["path"], meta, rec))
    return Series(tuple(entries), sample, ColumnSpec(**cols))
