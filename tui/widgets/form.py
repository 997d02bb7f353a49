"""The guided entry form: member, ends, what it carries, assumed shape, in that order.

The form reads its values from the :class:`~tui.document.Document` and writes every edit
back to it as typed.  Structural edits (another section shape, a mass added or removed)
rebuild the form from the document.
"""

from __future__ import annotations

import re
from typing import Any

import tomlkit
import tomlkit.exceptions
from rich.text import Text
from textual import events, on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.widget import Widget
from textual.widgets import Button, Label, Select, Static

from beamtone.calc import materials, schema
from beamtone.calc.errors import InputError
from beamtone.calc.positions import RIGHT_END
from beamtone.tui.document import Document
from beamtone.tui.widgets.quantity import QuantityField, TextField

__all__ = ["WorksheetForm"]

_CUSTOM = "(custom)"
_SHAPE_DEFAULTS = {
    "rectangle": {"width": "50 mm", "depth": "10 mm"},
    "round": {"diameter": "30 mm"},
    "round-tube": {"outside_diameter": "48 mm", "wall": "3 mm"},
    "box": {"width": "50 mm", "depth": "50 mm", "wall": "3 mm"},
    "i-beam": {"width": "100 mm", "depth": "200 mm", "flange": "8 mm", "web": "6 mm"},
    "properties": {"area": "450 mm^2", "second_moment": "1e5 mm^4"},
}
# The fields of each attachment row, in the schema's order.
_ROWS = ("mass", "spring")
# Rows of one list (inner supports, masses, ...) built at a time: a worksheet of a thousand
# supports opens at once, the rest a button press away (each press shows this many more).
PAGE = 12
# The button name of each list and the document table it shows.
_LISTS = {"inner": "inner support", "mass": "mass", "spring": "spring",
          "segment": "segment", "excitation": "excitation"}  # fmt: skip
_TABLE_LISTS = {"supports.inner": "inner", "mass": "mass", "spring": "spring",
                "member.segment": "segment", "excitation": "excitation"}  # fmt: skip
_ROW_KEY = re.compile(r"^(supports\.inner|mass|spring|member\.segment|excitation)\[(\d+)\]")


def _field(key: str, value: Any, *, optional: bool | None = None) -> QuantityField:
    """The field of a worksheet quantity: label, dimension and limits from the schema.

    A position is on the member, so its field refuses a negative value at once (the loader
    reads any sign and names the member's span when it solves).
    """
    entry = schema.entry(key)
    assert entry.dimension is not None, key
    return QuantityField(
        key,
        entry.label,
        entry.dimension,
        _text(value),
        allow_zero=entry.allow_zero,
        allow_negative=entry.allow_negative and not entry.position,
        position=entry.position or not entry.minimum,
        optional=not entry.required if optional is None else optional,
    )


def _text_field(key: str, value: str, placeholder: str = "") -> TextField:
    return TextField(key, schema.entry(key).label, value, placeholder)


class _Choice(Select):
    """A picker that can be mounted while the app closes.

    Found: closing the app just as the rest of the form was built ended, about one start in
    eight, in a traceback from the picker's own mount handler, which looks for a part of
    itself the closing app never mounted.  Where its parts are missing, the mount does
    nothing (``prevent_default`` stops the handlers of the classes below this one).
    """

    def _on_mount(self, event: events.Mount) -> None:
        if not self.children:  # its parts were never mounted: the app is closing
            event.prevent_default()


class WorksheetForm(VerticalScroll):
    """The entry form over a document."""

    class Changed(Message):
        """The document changed (``structural`` when the form was rebuilt; ``edit`` names
        a typed edit, ``key = text``)."""

        def __init__(self, structural: bool = False, edit: str = "") -> None:
            super().__init__()
            self.structural = structural
            self.edit = edit

    def __init__(self, document: Document, id: str | None = None, *, lazy: bool = False) -> None:  # noqa: A002
        super().__init__(id=id)
        self.document = document
        # lazy: the first build shows the member and its ends (what is in view) and leaves the
        # rest to fill(), called once the first results are on screen
        self.complete = not lazy
        self._derived = ""  # the shown section and member properties
        self._derived_panel: Static | None = None  # where they are shown (set when built)
        # fields a solve's error marked: the next solve clears these only, not every field
        self._solve_marked: list[Widget] = []
        # Selects announce their first value when mounted; only later changes are edits
        # (otherwise a value the picker cannot show would be overwritten unasked).
        self._armed = False
        # how many rows of each list are built (see PAGE)
        self._shown: dict[str, int] = {}

    # --- building --------------------------------------------------------------------------

    def compose(self) -> ComposeResult:
        yield from self._head()
        yield _Rest(self)

    async def fill(self) -> None:
        """Build the rest of a lazily built form (what it carries, shape, excitations,
        tolerances)."""
        if not self.complete:
            self.complete = True
            self._armed = False
            await self.query_one(_Rest).recompose()
            self.call_after_refresh(self._arm)

    def _head(self) -> ComposeResult:
        """The member and its ends: the top of the form."""
        doc = self.document
        yield Static("1  Member", classes="step")
        yield _text_field("title", str(doc.get("title", "")))
        segments = doc.rows("member.segment")
        if not segments:
            yield _field("member.length", doc.get("member.length"))
        yield from self._material()
        yield from self._section(
            "member.section", doc.get("member.section"), optional=bool(segments)
        )
        for i, seg in self._window("segment", segments):
            key = f"member.segment[{i}]"
            with Horizontal(classes="rowhead"):
                yield Label(f"segment {i}", classes="rowtitle")
                yield Button("remove", id=f"remove-segment-{i}", classes="small")
            yield _field(f"{key}.length", seg.get("length"))
            if isinstance(seg.get("section"), dict):
                yield from self._section(f"{key}.section", seg["section"], picker=False)
        yield from self._more("segment", len(segments))
        yield Button("+ segment (step the member)", id="add-segment", classes="small")
        self._derived_panel = Static("", id="derived", classes="derived")
        yield self._derived_panel

        yield Static("2  Ends", classes="step")
        for side in ("left", "right"):
            ends = schema.entry(f"supports.{side}")
            with Horizontal(classes="pair"):
                yield Label(ends.label, classes="pairlabel")
                yield _Choice(
                    [(k, k) for k in ends.choices],
                    value=_choice(doc.get(f"supports.{side}"), ends.choices),
                    allow_blank=False,
                    id=f"supports-{side}",
                    compact=True,
                )
        inner_kinds = schema.entry("supports.inner[].kind").choices
        inner = doc.inner_supports()
        for i, sup in self._window("inner", inner):
            with Horizontal(classes="rowhead"):
                yield Label(f"inner support {i}", classes="rowtitle")
                yield _Choice(
                    [(k, k) for k in inner_kinds],
                    value=_choice(sup.get("kind"), inner_kinds),
                    allow_blank=False,
                    id=f"inner-kind-{i}",
                    compact=True,
                )
                yield Button("remove", id=f"remove-inner-{i}", classes="small")
            yield _field(f"supports.inner[{i}].at", sup.get("at"))
        yield from self._more("inner", len(inner))
        yield Button("+ inner support", id="add-inner", classes="small")

    def _tail(self) -> ComposeResult:
        """What it carries, the assumed shape, what excites it, the tolerances."""
        doc = self.document
        yield Static("3  What it carries", classes="step")
        yield _field("member.added_mass", doc.get("member.added_mass"))
        yield _field("member.axial_force", doc.get("member.axial_force"))
        for table in _ROWS:
            yield from self._rows(table)
        with Horizontal(classes="buttons"):
            yield Button("+ mass", id="add-mass", classes="small")
            yield Button("+ spring", id="add-spring", classes="small")

        yield Static("4  Assumed shape and checks", classes="step")
        yield _text_field(
            "estimate.shape",
            _text(doc.get("estimate.shape")),
            "static (default), polynomial, trigonometric, or 1 - cos(pi*x/(2*L))",
        )
        ritz = doc.get("estimate.shapes")
        yield _text_field(
            "estimate.shapes", "" if ritz is None else str(ritz), "e.g. 4 (blank: none)"
        )
        modes = schema.entry("check.modes")
        yield _text_field(
            "check.modes", _text(doc.get("check.modes")), f"{modes.default} (default)"
        )

        yield Static("5  What excites it", classes="step")
        excitations = doc.rows("excitation")
        for i, row in self._window("excitation", excitations):
            with Horizontal(classes="rowhead"):
                yield Label(f"excitation {i}", classes="rowtitle")
                yield Button("remove", id=f"remove-excitation-{i}", classes="small")
            yield from self._excitation(i, row)
        yield from self._more("excitation", len(excitations))
        yield Button("+ excitation", id="add-excitation", classes="small")

        yield Static("6  Tolerances (bands and what moves them most)", classes="step")
        for i, (key, value) in enumerate(doc.tolerances().items()):
            with Horizontal(classes="rowhead"):
                yield Label(Text(key), classes="rowtitle")
                yield Button("remove", id=f"remove-tolerance-{i}", classes="small")
            yield _text_field(f"tolerances.{key}", _written(value), '"5 %", "0.3 mm"')
        with Horizontal(classes="pair"):
            yield _Choice(
                [(k, k) for k in _tolerable(doc) if k not in doc.tolerances()],
                prompt="a quantity to tolerance",
                id="tolerance-key",
                compact=True,
            )
            yield Button("+ tolerance", id="add-tolerance", classes="small")

    def _excitation(self, i: int, row: dict[str, Any]) -> ComposeResult:
        """An excitation's fields, each from its schema entry (only the keys it needs)."""
        key = f"excitation[{i}]"
        given = "frequency" if "frequency" in row else "speed"
        shown = ["name", given, "orders", "criterion" if "criterion" in row else "margin"]
        shown += [n for n in ("force", "force_at") if n in row]
        for name in shown:
            entry = schema.entry(f"{key}.{name}")
            value = row.get(name)
            if entry.kind == schema.QUANTITY and not isinstance(value, list):
                yield _field(f"{key}.{name}", value, optional=False)
            else:
                yield _text_field(f"{key}.{name}", _written(value), entry.help[:40])

    def _rows(self, table: str) -> ComposeResult:
        """The entries of ``[[mass]]`` or ``[[spring]]``, each with a remove button."""
        rows = self.document.rows(table)
        for i, row in self._window(table, rows):
            with Horizontal(classes="rowhead"):
                yield Label(f"{table} {i}", classes="rowtitle")
                yield Button("remove", id=f"remove-{table}-{i}", classes="small")
            for name in schema.children(f"{table}[]"):
                yield _field(f"{table}[{i}].{name}", row.get(name))
        yield from self._more(table, len(rows))

    def _window(self, name: str, rows: Any) -> list[tuple[int, Any]]:
        """The rows of the list ``name`` that are built, with their indices."""
        return list(enumerate(rows))[: self._shown.get(name, PAGE)]

    def _more(self, name: str, count: int) -> ComposeResult:
        """Under a list with rows not built: how many, and a button that builds more."""
        shown = min(count, self._shown.get(name, PAGE))
        if shown < count:
            noun = _LISTS[name]
            yield Static(
                f"{count - shown} more {noun} entries are in the worksheet, kept as written "
                f"(showing {shown} of {count})",
                id=f"more-{name}-note",
                classes="derived",
            )
            yield Button(f"show {min(PAGE, count - shown)} more", id=f"more-{name}",
                         classes="small")  # fmt: skip

    def _reveal(self, name: str, count: int) -> None:
        """After an entry is added at the end of a list: build it where that takes one page
        at most, else say where it is."""
        shown = self._shown.get(name, PAGE)
        if count <= shown:
            return
        if count - shown <= PAGE:
            self._shown[name] = count
        else:
            self.app.notify(f"added as {_LISTS[name]} {count - 1}, at the end of the list")

    def _material(self) -> ComposeResult:
        value = self.document.get("member.material")
        names = list(schema.entry("member.material").choices)
        current = _CUSTOM if isinstance(value, dict) else _choice(value, (*names, _CUSTOM))
        options = [(n, n) for n in names] + [(_CUSTOM, _CUSTOM)]
        with Horizontal(classes="pair"):
            yield Label("material", classes="pairlabel")
            yield _Choice(options, value=current, allow_blank=False, id="material", compact=True)
        if isinstance(value, dict):
            for name in ("youngs_modulus", "density"):
                yield _field(f"member.material.{name}", value.get(name))

    def _section(
        self, key: str, section: Any, *, optional: bool = False, picker: bool = True
    ) -> ComposeResult:
        if not isinstance(section, dict):
            if optional:
                return
            section = {}
        shape = section.get("shape", "properties" if "area" in section else "rectangle")
        if picker:
            with Horizontal(classes="pair"):
                yield Label("section", classes="pairlabel")
                yield _Choice(
                    [(s, s) for s in schema.SECTION_SHAPES],
                    value=_choice(shape, tuple(schema.SECTION_SHAPES)),
                    allow_blank=False,
                    id="shape",
                    compact=True,
                )
        spec = schema.SECTION_SHAPES.get(shape)
        if spec is None:
            return
        required, optional_keys = spec
        for name in (*required, *optional_keys):
            yield _field(f"{key}.{name}", section.get(name), optional=name in optional_keys)

    # --- edits -----------------------------------------------------------------------------

    @on(QuantityField.Edited)
    def _edited(self, event: QuantityField.Edited) -> None:
        event.stop()
        key, text = event.key, event.text
        entry = schema.find(key)
        if key.startswith("tolerances."):  # a quoted key path: the table's own key
            self.document.set_tolerance(key.removeprefix("tolerances."), _value(text))
        elif entry is not None and (
            entry.kind == schema.NUMBER or isinstance(self.document.get(key), list)
        ):  # orders, a range of speeds: numbers and lists as TOML reads them
            self.document.set(key, _value(text))
        elif entry is not None and entry.kind == schema.INTEGER:
            self._set_integer(key, text)
        elif not text.strip() and _removable(entry):
            self.document.delete(key)
        else:
            self.document.set(key, text)
        self.post_message(self.Changed(edit=f"{key} = {text}"))

    def _set_integer(self, key: str, text: str) -> None:
        stripped = text.strip()
        if not stripped:
            self.document.delete(key)
            return
        try:
            self.document.set(key, int(stripped))
        except ValueError:
            self.document.set(key, stripped)

    @on(Select.Changed)
    async def _selected(self, event: Select.Changed) -> None:
        event.stop()
        if not self._armed:
            return
        select_id = event.select.id or ""
        value = event.value
        doc = self.document
        if select_id in ("supports-left", "supports-right"):
            doc.set(select_id.replace("-", "."), value)
        elif select_id.startswith("inner-kind-"):
            i = int(select_id.rsplit("-", 1)[1])
            supports = [dict(s) for s in doc.inner_supports()]
            if supports[i].get("kind") != value:
                supports[i]["kind"] = value
                doc.set_inner_supports(supports)
        elif select_id == "material":
            old = doc.get("member.material")
            if value == _CUSTOM and not isinstance(old, dict):
                base = materials.lookup(str(old)) if isinstance(old, str) else None
                E = f"{(base.youngs_modulus if base else 200e9) / 1e9:g} GPa"
                rho = f"{(base.density if base else 7850.0):g} kg/m^3"
                doc.replace_section("member.material", {"youngs_modulus": E, "density": rho})
                await self.rebuild()
            elif value != _CUSTOM and old != value:
                rebuild = isinstance(old, dict)
                doc.set("member.material", value)
                if rebuild:
                    await self.rebuild()
        elif select_id == "shape":
            current = doc.get("member.section") or {}
            if current.get("shape") != value:
                fresh = {"shape": value, **_SHAPE_DEFAULTS[str(value)]}
                for name in fresh:
                    if name in current and name != "shape":
                        fresh[name] = current[name]
                if value == "properties":
                    del fresh["shape"]
                doc.replace_section("member.section", fresh)
                await self.rebuild()
        else:
            return
        self.post_message(self.Changed())

    @on(Button.Pressed)
    async def _pressed(self, event: Button.Pressed) -> None:
        button = event.button.id or ""
        doc = self.document
        if button == "add-mass":  # at the right end, following the length when it changes
            doc.add_row("mass", {"at": RIGHT_END, "mass": "1 kg"})
            self._reveal("mass", len(doc.rows("mass")))
        elif button == "add-spring":
            doc.add_row("spring", {"at": RIGHT_END, "stiffness": "10 kN/m"})
            self._reveal("spring", len(doc.rows("spring")))
        elif button == "add-inner":
            supports = [dict(s) for s in doc.inner_supports()]
            supports.append({"at": _middle(doc), "kind": "pinned"})
            doc.set_inner_supports(supports)
            self._reveal("inner", len(supports))
        elif button == "add-segment":
            doc.make_stepped()
            rows = doc.rows("member.segment")
            last = dict(rows[-1]) if rows else {"length": "0.5 m"}
            doc.add_row("member.segment", last)
            self._reveal("segment", len(doc.rows("member.segment")))
        elif button == "add-excitation":
            n = len(doc.rows("excitation"))
            doc.add_row(
                "excitation",
                {"name": f"source {n + 1}", "speed": "1480 rpm", "orders": 1, "margin": "20 %"},
            )
            self._reveal("excitation", n + 1)
        elif button.startswith("more-"):
            name = button.removeprefix("more-")
            self._shown[name] = self._shown.get(name, PAGE) + PAGE
            event.stop()
            await self.rebuild()
            return
        elif button == "add-tolerance":
            chosen = self.query_one("#tolerance-key", Select).value
            if chosen is Select.NULL:
                self.app.notify("pick the quantity to tolerance first", severity="warning")
                return
            doc.set_tolerance(str(chosen), "5 %")
        elif button.startswith("remove-"):
            _, what, index = button.split("-")
            i = int(index)
            if what == "tolerance":
                doc.set_tolerance(list(doc.tolerances())[i], None)
            elif what == "inner":
                supports = [dict(s) for n, s in enumerate(doc.inner_supports()) if n != i]
                doc.set_inner_supports(supports)
            else:
                table = {"mass": "mass", "spring": "spring", "segment": "member.segment",
                         "excitation": "excitation"}[what]  # fmt: skip
                doc.remove_row(table, i)
        else:
            return
        event.stop()
        await self.rebuild()
        self.post_message(self.Changed(structural=True))

    def on_mount(self) -> None:
        self.call_after_refresh(self._arm)

    def _arm(self) -> None:
        self._armed = True

    async def rebuild(self, focus: str | None = None) -> None:
        """Rebuild the form from the document (after a structural change); the focus stays
        where the user was (or moves to the widget ``focus`` names, an id)."""
        self._armed = False
        focused = self.app.focused
        keep = focus or (focused.id if focused is not None else None)
        scroll = self.scroll_y
        await self.recompose()
        self.call_after_refresh(self._arm)
        if self._derived:
            self.update_derived(self._derived)
            self.mark_derived_stale()
        found = self.query(f"#{keep}") if keep else None
        if found:
            found.first().focus(scroll_visible=False)
        self.scroll_to(y=scroll, animate=False)

    # --- feedback --------------------------------------------------------------------------

    def update_derived(self, text: str) -> None:
        """Show the section and member properties of the last solved member
        (:func:`beamtone.tui.shown.derived_text`)."""
        self._derived = text
        panel = self._derived_panel
        if panel is not None and panel.is_attached:
            panel.update(text)
            panel.remove_class("-stale")

    def mark_derived_stale(self) -> None:
        """Mark the section and member properties out of date until the next solve."""
        panel = self._derived_panel
        if panel is None or not panel.is_attached:
            return
        if self._derived and not panel.has_class("-stale"):
            panel.add_class("-stale")
            panel.update(Text(f"(out of date) {self._derived}", style="dim italic"))

    def clear_solve_errors(self) -> None:
        """Drop the marks a failed solve left; each field it marked shows only its own
        reading again (the others show nothing but their own)."""
        marked, self._solve_marked = self._solve_marked, []
        for field in marked:
            if field.is_attached:
                field.recheck()  # type: ignore[attr-defined]

    def recheck_all(self) -> None:
        """Every field reads its text again (once the unit registry is built), and the marks
        of a failed solve are dropped."""
        self._solve_marked = []
        for field in self.query(".quantity, .text"):
            field.recheck()  # type: ignore[attr-defined]

    def show_error(self, exc: InputError) -> bool:
        """Mark the field the error names; False where no field shows that key.  An entry
        of a list that is not built yet (see PAGE) is built first, then marked."""
        for field in self.query(".quantity, .text"):
            if getattr(field, "key", None) == exc.key:
                hint = f" ({exc.hint})" if exc.hint else ""
                field.show_error(f"expected {exc.expected}{hint}")  # type: ignore[attr-defined]
                self._solve_marked.append(field)
                return True
        row = _ROW_KEY.match(exc.key or "")
        if row is not None:
            name = _TABLE_LISTS[row.group(1)]
            index = int(row.group(2))
            if index >= self._shown.get(name, PAGE):
                self._shown[name] = index + 1

                async def built() -> None:
                    await self.rebuild()
                    self.show_error(exc)

                self.call_later(built)
                return True
        return False


class _Rest(Vertical):
    """The lower part of the form (empty until the form is complete)."""

    def __init__(self, form: WorksheetForm) -> None:
        super().__init__()
        self.styles.height = "auto"
        self._form = form

    def compose(self) -> ComposeResult:
        if self._form.complete:
            yield from self._form._tail()


def _text(value: Any) -> str:
    return "" if value is None else str(value)


def _written(value: Any) -> str:
    """A value as the user would write it: text as is, numbers and lists in TOML."""
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    return tomlkit.item(value).as_string()


def _value(text: str) -> Any:
    """Typed text as TOML reads it where it is a number or a list (``2``, ``[1, 2]``,
    ``["900 rpm", "1800 rpm"]``), else the text itself (the loader names what is wrong)."""
    try:
        return tomlkit.parse(f"v = {text}")["v"].unwrap()
    except (tomlkit.exceptions.TOMLKitError, ValueError, RecursionError):
        return text


def _tolerable(doc: Document) -> list[str]:
    """The key paths a tolerance may name: the worksheet's quantities sizing may vary."""
    try:
        return list(schema.quantity_keys(doc.plain()))
    except InputError:
        return []


def _choice(value: Any, options: tuple[str, ...]) -> str:
    return value if isinstance(value, str) and value in options else options[0]


def _removable(entry: schema.Entry | None) -> bool:
    """A blank field removes its key where the worksheet may leave it out: an optional
    quantity, or text with a default of its own (a blank title stays a blank title)."""
    if entry is None or entry.required:
        return False
    return entry.kind == schema.QUANTITY or entry.default not in (None, "")


def _middle(doc: Document) -> str:
    try:
        length = doc.worksheet().member.length
    except InputError:
        return "0.5 m"
    return f"{length / 2:.6g} m"
