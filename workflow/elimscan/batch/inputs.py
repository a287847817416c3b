"""The substrates and geometry files a batch config names: a CSV or ``.smi`` file of substrates, per-substrate geometries.

A bad row of a substrates file becomes a ``SubstrateRow`` with its ``problem`` (only its own jobs fail); a
file that cannot be read at all raises ``ConfigError``.
"""

from __future__ import annotations

import csv
import difflib
import hashlib
import io
from dataclasses import dataclass
from pathlib import Path

from elimscan.config import RunConfig
from elimscan.errors import ConfigError

@dataclass(frozen=True)
class SubstrateRow:
    """One substrate read from a substrates file; ``problem`` says why the row cannot run (None: fine)."""

    name: str
    smiles: str
    charge: int | None
    multiplicity: int
    source: str
    line: int
    problem: str | None = None


_CSV_COLUMNS = ("name", "smiles", "charge", "multiplicity", "note")


def _int_field(text: str | None, what: str, minimum: int | None = None) -> tuple[int | None, str | None]:
    """Return (value, problem) for an optional integer cell."""
    if text is None or not text.strip():
        return None, None
    try:
        value = int(text.strip())
    except ValueError:
        return None, f"{what} must be a whole number, got {text.strip()!r}"
    if minimum is not None and value < minimum:
        return None, f"{what} must be at least {minimum}, got {value}"
    return value, None


def _csv_rows(text: str, display: str) -> list[SubstrateRow]:
    """Return the rows of a substrates CSV (header with name and smiles; charge, multiplicity, note optional)."""
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise ConfigError(f"substrates file '{display}' has no rows", key_path="substrates_file")
    reader = csv.reader(io.StringIO(text, newline=""), strict=True)  # lines may end in \n, \r\n or \r alone
    header: list[str] | None = None
    rows: list[SubstrateRow] = []
    for cells, line in _csv_records(reader, display):
        if not any(c.strip() for c in cells) or cells[0].lstrip().startswith("#"):
            continue
        if header is None:
            header = [c.strip().lower() for c in cells]
            for column in header:
                if column not in _CSV_COLUMNS:
                    close = difflib.get_close_matches(column, _CSV_COLUMNS, n=1)
                    hint = f"; did you mean '{close[0]}'?" if close else ""
                    raise ConfigError(f"substrates file '{display}' line {line}: unknown column '{column}'{hint} "
                                      f"(columns: {', '.join(_CSV_COLUMNS)}; name and smiles are required)",
                                      key_path="substrates_file")
            missing = [c for c in ("name", "smiles") if c not in header]
            if missing:
                raise ConfigError(f"substrates file '{display}' line {line}: the header needs the column(s) "
                                  f"{', '.join(missing)} (found: {', '.join(header)})", key_path="substrates_file")
            continue
        source = f"{display} line {line}"
        if len(cells) != len(header):
            name = cells[header.index("name")].strip() if len(cells) > header.index("name") else ""
            rows.append(SubstrateRow(name or f"line-{line}", "", None, 1, source, line,
                                     f"{source}: expected {len(header)} fields ({', '.join(header)}), found {len(cells)}"))
            continue
        cell = dict(zip(header, (c.strip() for c in cells)))
        charge, bad_charge = _int_field(cell.get("charge"), "charge")
        multiplicity, bad_mult = _int_field(cell.get("multiplicity"), "multiplicity", minimum=1)
        name = cell["name"] or f"line-{line}"
        problem = None
        if not cell["name"]:
            problem = f"{source}: empty name"
        elif not cell["smiles"]:
            problem = f"{source}: substrate '{name}': empty SMILES"
        elif bad_charge or bad_mult:
            problem = f"{source}: substrate '{name}': {bad_charge or bad_mult}"
        rows.append(SubstrateRow(name, cell["smiles"], charge, multiplicity or 1, source, line, problem))
    if not rows:
        raise ConfigError(f"substrates file '{display}' has a header but no substrate rows", key_path="substrates_file")
    return rows


def _open_quote(display: str, start: int, end: int | None) -> ConfigError:
    """Return the error for a CSV quote opened on line ``start`` and never closed (the field runs on to line ``end``,
    None: to the end of the file)."""
    until = f"line {end}" if end is not None else "the end of the file"
    return ConfigError(f"substrates file '{display}' line {start}: a quote (\") opened here is never closed (the "
                       f"field runs on to {until}); close it or remove it", key_path="substrates_file")


def _csv_records(reader, display: str):
    """Yield (cells, first line) of each CSV record; raise ConfigError naming the line of a quote never closed."""
    start = 1
    while True:
        try:
            cells = next(reader)
        except StopIteration:
            return
        except csv.Error as err:
            if "end of data" in str(err):
                raise _open_quote(display, start, None) from err
            raise ConfigError(f"substrates file '{display}' line {reader.line_num}: not valid CSV ({err})",
                              key_path="substrates_file") from err
        if any("\n" in c or "\r" in c for c in cells):  # no name or SMILES spans lines: a quote left open
            raise _open_quote(display, start, reader.line_num)
        yield cells, start
        start = reader.line_num + 1


def _smiles_rows(text: str, display: str, stem: str) -> list[SubstrateRow]:
    """Return the rows of a SMILES file: 'SMILES [name]' per line; '#' comments and blank lines skipped."""
    rows = []
    for number, raw in enumerate(text.splitlines(), start=1):
        parts = raw.split(None, 1)
        if not parts or parts[0].startswith("#"):
            continue
        if parts[0].lower() == "smiles" and not rows:
            continue  # a header line
        name = parts[1].strip() if len(parts) > 1 else f"{stem}-{number}"
        rows.append(SubstrateRow(name, parts[0], None, 1, f"{display} line {number}", number))
    if not rows:
        raise ConfigError(f"substrates file '{display}' has no rows", key_path="substrates_file")
    return rows


def read_substrate_file(path: Path, display: str) -> tuple[list[SubstrateRow], str]:
    """Return the rows of a substrates file (CSV or SMILES) and the file's SHA-256; ConfigError if unreadable."""
    try:
        data = path.read_bytes()
    except OSError as err:
        raise ConfigError(f"cannot read substrates file '{path}': {err.strerror or err}", key_path="substrates_file") from err
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        raise ConfigError(f"substrates file '{display}' is not UTF-8 text ({err.reason} at byte {err.start})",
                          key_path="substrates_file") from err
    rows = _csv_rows(text, display) if path.suffix.lower() == ".csv" else _smiles_rows(text, display, path.stem)
    return rows, hashlib.sha256(data).hexdigest()


def read_geometries(config: RunConfig, folder: Path) -> dict[str, tuple[str, str]]:
    """Return {substrate name: (file text, 'sdf' | 'xyz')} for YAML substrates that name a geometry file."""
    found = {}
    for index, item in enumerate(config.substrates):
        if item.geometry is None:
            continue
        path = Path(item.geometry) if Path(item.geometry).is_absolute() else folder / item.geometry
        try:
            text = path.read_text(encoding="utf-8")
        except OSError as err:
            raise ConfigError(f"substrate '{item.name}': cannot read geometry file '{path}': {err.strerror or err}",
                              key_path=f"substrates.{index}.geometry") from err
        found[item.name] = (text, "xyz" if path.suffix.lower() == ".xyz" else "sdf")
    return found

