"""The worksheet being edited: its TOML document, file, and modified state.

Every field of the app writes its text here as typed, so nothing typed is lost even while it
is wrong; the worksheet is validated (by ``calc.worksheet``) only when it is solved or saved.
Comments and layout of an opened file are kept (tomlkit).
"""

from __future__ import annotations

import os
import time
from collections.abc import Iterator
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

import tomlkit
import tomlkit.exceptions
from tomlkit.items import AoT, Table

from beamtone.calc import schema
from beamtone.calc.errors import InputError
from beamtone.calc.positions import from_right
from beamtone.calc.worksheet import Worksheet, key_path, loads, write_atomic

__all__ = ["Template", "TEMPLATES", "Document"]

_ROW_DEFAULTS: dict[str, dict[str, str]] = {
    "mass": {"at": "0 m", "mass": "1 kg"},
    "spring": {"at": "0 m", "stiffness": "10 kN/m"},
}


@dataclass(frozen=True)
class Template:
    """A starting worksheet shipped with the app."""

    name: str
    description: str
    filename: str

    def text(self) -> str:
        """The template's TOML text."""
        return (
            resources.files("beamtone.tui").joinpath("templates", self.filename).read_text("utf-8")
        )


TEMPLATES: tuple[Template, ...] = (
    Template(
        "Cantilever carrying an instrument",
        "a tube fixed at its base, instrument at the tip",
        "cantilever-instrument.toml",
    ),
    Template(
        "Guided slide",
        "fixed at one end, sliding without rotating at the other",
        "guided-slide.toml",
    ),
    Template(
        "Span carrying a machine", "simply supported beam with a heavy mass", "span-machine.toml"
    ),
    Template("Stepped shaft", "three diameters on two bearing springs", "stepped-shaft.toml"),
    Template("Free-free bar", "a bar hung on soft cords", "free-bar.toml"),
)


@dataclass
class Document:
    """An editable worksheet.

    Attributes
    ----------
    doc : tomlkit.TOMLDocument
        The worksheet as edited.
    path : Path or None
        The file it was opened from or saved to.
    modified : bool
        Whether it differs from what was last opened or saved.
    """

    doc: tomlkit.TOMLDocument
    path: Path | None = None
    modified: bool = False
    _new_name: str | None = field(default=None, repr=False, compare=False)

    # --- opening ---------------------------------------------------------------------------

    @classmethod
    def from_text(cls, text: str, path: Path | None = None) -> Document:
        """A document from TOML text; InputError (key ``file``) if it does not parse."""
        try:
            doc = tomlkit.parse(text)
        except tomlkit.exceptions.ParseError as exc:
            raise InputError(
                "file", str(path or "text"), "valid TOML", f"line {exc.line}, column {exc.col}"
            ) from None
        except (tomlkit.exceptions.TOMLKitError, ValueError, RecursionError) as exc:
            raise InputError("file", str(path or "text"), "valid TOML", str(exc)[:100]) from None
        return cls(doc, path, False)

    @classmethod
    def open(cls, path: str | Path) -> Document:
        """Open a worksheet file as it is, entries to fix included (they are marked in the
        form); InputError (key ``file``) only where it cannot be read as TOML text."""
        from beamtone.calc.files import read_limited
        from beamtone.calc.worksheet import MAX_BYTES

        p = Path(path).expanduser()
        raw = read_limited(p, MAX_BYTES)  # the command line's guards: size, kind, access
        if b"\x00" in raw:
            raise InputError("file", str(p), "a TOML text file", "it contains binary data")
        try:
            text = raw.decode("utf-8").removeprefix("\ufeff")
        except UnicodeDecodeError as exc:
            raise InputError(
                "file", str(p), "a TOML text file in UTF-8", f"undecodable byte at {exc.start}"
            ) from None
        return cls.from_text(text, p)

    @classmethod
    def open_or_new(cls, path: str | Path, template: Template) -> Document:
        """Open ``path``, or start a new worksheet from ``template`` that saves there where
        no file exists yet."""
        p = Path(path).expanduser()
        if p.exists():
            return cls.open(p)
        document = cls.from_template(template)
        document.path = p
        return document

    @classmethod
    def from_template(cls, template: Template) -> Document:
        """A new, unsaved document from a template."""
        document = cls.from_text(template.text())
        document.modified = False
        return document

    # --- reading ---------------------------------------------------------------------------

    def text(self) -> str:
        """The worksheet as TOML text."""
        return tomlkit.dumps(self.doc)

    def plain(self) -> dict[str, Any]:
        """The worksheet as plain Python data."""
        return self.doc.unwrap()

    def get(self, key: str, default: Any = None) -> Any:
        """The value at a key path (plain), or ``default`` where absent."""
        node: Any = self.doc
        for part in key_path(key, "field"):
            try:
                node = node[part]
            except (KeyError, IndexError, TypeError):
                return default
        return node.unwrap() if hasattr(node, "unwrap") else node

    def has(self, key: str) -> bool:
        """Whether the key path exists."""
        marker = object()
        return self.get(key, marker) is not marker

    def rows(self, table: str) -> list[dict[str, Any]]:
        """The entries of an array of tables (``mass``, ``spring``, ``member.segment``)."""
        value = self.get(table, [])
        return value if isinstance(value, list) else []

    def worksheet(self) -> Worksheet:
        """Validate and load the worksheet (InputError names the first problem)."""
        source = str(self.path) if self.path else "<app>"
        return loads(self.text(), source)

    @property
    def title(self) -> str:
        value = self.get("title", "")
        return value if isinstance(value, str) else ""

    # --- editing ---------------------------------------------------------------------------

    def set(self, key: str, value: Any) -> None:
        """Set the value at a key path, creating tables on the way (inline for sections)."""
        parts = key_path(key, "field")
        node: Any = self.doc
        for i, part in enumerate(parts[:-1]):
            nxt = parts[i + 1]
            if isinstance(part, int):
                node = node[part]
                continue
            if part not in node:
                inline = part in ("section", "material") or isinstance(nxt, int)
                node[part] = tomlkit.inline_table() if inline else tomlkit.table()
            elif part in ("section", "material") and isinstance(node[part], str):
                node[part] = tomlkit.inline_table()
            node = node[part]
        last = parts[-1]
        old = node.get(last) if isinstance(last, str) and hasattr(node, "get") else None
        old = old.unwrap() if hasattr(old, "unwrap") else old
        if old == value:
            return
        node[last] = value
        self.modified = True

    def replace_text(self, text: str) -> None:
        """Take new TOML text (e.g. with a sized value applied) as the unsaved worksheet."""
        self.doc = tomlkit.parse(text)
        self.modified = True

    def delete(self, key: str) -> None:
        """Remove the key at a key path if present."""
        parts = key_path(key, "field")
        node: Any = self.doc
        for part in parts[:-1]:
            try:
                node = node[part]
            except (KeyError, IndexError):
                return
        try:
            del node[parts[-1]]
        except (KeyError, IndexError):
            return
        self.modified = True

    def replace_section(self, key: str, section: dict[str, str]) -> None:
        """Replace a section table (e.g. ``member.section``) as a whole, inline."""
        table = tomlkit.inline_table()
        table.update(section)
        self.set(key, table)

    def add_row(self, table: str, values: dict[str, str] | None = None) -> int:
        """Append an entry to an array of tables; return its index."""
        row = tomlkit.table()
        row.update(values or _ROW_DEFAULTS.get(table, {}))
        parts = key_path(table, "field")
        node: Any = self.doc
        for part in parts[:-1]:
            node = node[part]
        name = parts[-1]
        if name not in node or not isinstance(node[name], AoT):
            existing = node.get(name) if hasattr(node, "get") else None
            node[name] = tomlkit.aot()
            if isinstance(existing, list):
                for item in existing:
                    t = tomlkit.table()
                    t.update(item)
                    node[name].append(t)
        node[name].append(row)
        self.modified = True
        return len(node[name]) - 1

    def remove_row(self, table: str, index: int) -> None:
        """Remove one entry of an array of tables (and the array when it empties)."""
        rows = self.rows(table)
        if not 0 <= index < len(rows):
            return
        parts = key_path(table, "field")
        node: Any = self.doc
        for part in parts[:-1]:
            node = node[part]
        del node[parts[-1]][index]
        if len(node[parts[-1]]) == 0:
            del node[parts[-1]]
        self.modified = True

    def make_stepped(self) -> None:
        """Turn a uniform member into one segment, so more segments can be added."""
        member = self.doc["member"]
        if "segment" in member:
            return
        segment = tomlkit.table()
        segment["length"] = member.get("length", "1 m")
        if "section" in member:
            section = tomlkit.inline_table()
            section.update(member["section"].unwrap())
            segment["section"] = section
            del member["section"]
        if "length" in member:
            del member["length"]
        member["segment"] = tomlkit.aot()
        member["segment"].append(segment)
        self.modified = True

    def tolerances(self) -> dict[str, Any]:
        """The ``[tolerances]`` table: key path -> tolerance as written."""
        value = self.get("tolerances", {})
        return dict(value) if isinstance(value, dict) else {}

    def set_tolerance(self, key: str, value: Any) -> None:
        """Set (or, with None, remove) the tolerance of a key path (a quoted TOML key)."""
        table = self.doc.get("tolerances")
        if value is None:
            if isinstance(table, dict) and key in table:
                del table[key]
                if not table:
                    del self.doc["tolerances"]
                self.modified = True
            return
        if not isinstance(table, dict):
            self.doc["tolerances"] = tomlkit.table()
            table = self.doc["tolerances"]  # the table as the document holds it
        if table.get(key) != value:
            table[key] = value
            self.modified = True

    def inner_supports(self) -> list[dict[str, Any]]:
        """The inner supports ``[{at, kind}]``."""
        value = self.get("supports.inner", [])
        return value if isinstance(value, list) else []

    def set_inner_supports(self, supports: list[dict[str, str]]) -> None:
        """Replace ``supports.inner`` as an inline array of inline tables."""
        supports_table: Table = self.doc["supports"]
        if not supports:
            if "inner" in supports_table:
                del supports_table["inner"]
                self.modified = True
            return
        array = tomlkit.array()
        for item in supports:
            t = tomlkit.inline_table()
            t.update(item)
            array.append(t)
        supports_table["inner"] = array
        self.modified = True

    # --- autosave ------------------------------------------------------------------------

    @property
    def autosave_path(self) -> Path:
        """Where unsaved edits are kept: beside the file, or, for a new worksheet, a file of
        its own in beamtone's cache folder (``$BEAMTONE_CACHE``, see calc.diskcache)."""
        if self.path is not None:
            return self.path.with_name(f".{self.path.name}.autosave")
        if self._new_name is None:
            self._new_name = f"{_NEW}{time.time_ns()}-{os.getpid()}.autosave"
        return _new_folder() / self._new_name

    def autosave(self) -> None:
        """Keep the unsaved edits (atomically) so a crash loses nothing; quiet on failure."""
        if not self.modified:
            return
        target = self.autosave_path
        try:
            target.parent.mkdir(parents=True, exist_ok=True)
            write_atomic(target, self.text())
        except (OSError, InputError):
            return  # an autosave that cannot be written must not stop the user working

    def discard_autosave(self) -> None:
        """Remove the kept edits (after a save, or when the user lets them go)."""
        try:
            self.autosave_path.unlink(missing_ok=True)
        except OSError:
            return

    def recoverable(self) -> str | None:
        """Edits kept by an earlier session that ended without saving, if any differ (for a
        new worksheet: the newest new worksheet whose session has ended, taken over as this
        one's own autosave)."""
        if self.path is None and self._new_name is None:
            orphan = _orphan()
            if orphan is None:
                return None
            self._new_name = orphan.name
        target = self.autosave_path
        try:
            text = target.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError):
            return None
        return text if text.strip() and text != self.text() else None

    def recover(self, text: str) -> None:
        """Take the kept edits as the current, unsaved worksheet."""
        self.doc = tomlkit.parse(text)
        self.modified = True

    # --- saving ----------------------------------------------------------------------------

    def problems(self) -> list[InputError]:
        """The entries to fix: every quantity that does not read, then the loader's first
        complaint where it names another key (the loader stops at its first)."""
        found: list[InputError] = []
        for key, value in _leaves(self.plain(), ""):
            entry = schema.find(key)
            if entry is None or entry.kind != schema.QUANTITY or not isinstance(value, str):
                continue
            if entry.position and from_right(value) is not None:
                continue  # read with the member's length, by the loader below
            try:
                entry.parse(value, key)
            except InputError as exc:
                found.append(exc)
        try:
            self.worksheet()
        except InputError as exc:
            if all(exc.key != seen.key for seen in found):
                found.append(exc)
        return found

    def save(self, path: str | Path | None = None, analysis: Any = None) -> Path:
        """Write the worksheet as it is, atomically (a draft with entries to fix included:
        :meth:`problems` names them); the document is then unmodified.

        Parameters
        ----------
        path : str or Path, optional
            Where to write (default: the file it came from).
        analysis : calc.analysis.Analysis, optional
            Results of exactly these inputs: written into the worksheet as its calculation
            record (``[record]``).  Without them, an old record is removed, so a saved
            worksheet never carries results of other inputs.

        Raises
        ------
        InputError
            When the file cannot be written (the old file stays intact).
        """
        from beamtone.calc.record import build_record, inputs_digest, with_record

        target = Path(path).expanduser() if path is not None else self.path
        if target is None:
            raise InputError("file", None, "a file name to save to (save as)")
        if "record" in self.doc:
            del self.doc["record"]
        text = self.text()
        if analysis is not None:
            try:
                sheet = loads(text, str(target))
            except InputError:
                sheet = None  # a draft: saved without a record
            if sheet is not None and inputs_digest(analysis.sheet.data) == inputs_digest(
                sheet.data
            ):
                text = with_record(text, build_record(analysis))
                self.doc = tomlkit.parse(text)
        write_atomic(target, text)
        self.discard_autosave()
        self.path = target
        self.modified = False
        return target


_NEW = "new-worksheet-"


def _new_folder() -> Path:
    """Where new worksheets keep their unsaved edits (a folder of the working tree's
    ``.beamtone-autosave`` where the user has no cache folder)."""
    from beamtone.calc import diskcache

    return (diskcache.folder() or Path(".beamtone-autosave")) / "autosave"


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    return True


def _orphan() -> Path | None:
    """The newest new worksheet's autosave whose session has ended (its process is gone)."""
    try:
        kept = sorted(_new_folder().glob(f"{_NEW}*.autosave"), key=lambda p: p.name)
    except OSError:
        return None
    for candidate in reversed(kept):
        pid = candidate.stem.rsplit("-", 1)[-1]
        if pid.isdigit() and not _alive(int(pid)):
            return candidate
    return None


def _leaves(node: Any, prefix: str) -> Iterator[tuple[str, Any]]:
    """Every (key path, value) of plain worksheet data, tables and arrays of tables walked."""
    if isinstance(node, dict):
        for name, value in node.items():
            if prefix == "" and name == "record":
                continue
            yield from _leaves(value, f"{prefix}.{name}" if prefix else str(name))
    elif isinstance(node, list) and node and all(isinstance(v, dict) for v in node):
        for i, item in enumerate(node):
            yield from _leaves(item, f"{prefix}[{i}]")
    else:
        yield prefix, node
