"""Driving the app headless as a user would, and waiting for what it does, not for time.

Fields are clicked and typed into key by key; buttons are clicked. A test waits for the thing
it needs: the workbench's results for exactly what the document now holds (the workbench sets
an event each time a solve of its latest inputs finishes), a screen on top of the stack (the
app's screen-change signal), the app's workers. ``pilot.pause()`` without a delay is used only
to flush the message queues. ``TIMEOUT`` turns a hang into a failure; it never paces a test.
"""

from __future__ import annotations

import asyncio
import functools
from collections.abc import Callable, Coroutine
from typing import Any, TypeVar

from textual import events
from textual.keys import _character_to_key
from textual.pilot import Pilot
from textual.screen import Screen
from textual.widget import Widget
from textual.widgets import Button, Input

from beamtone.tui.app import BeamtoneApp
from beamtone.tui.widgets.results import ResultsView

__all__ = [
    "BAR",
    "TIMEOUT",
    "click",
    "edit",
    "field_of",
    "on_top",
    "press",
    "settled",
    "sync",
    "type_into",
    "work_done",
]

TIMEOUT = 120.0  # seconds before a wait counts as a hang (a loaded 2-core machine is slow)

S = TypeVar("S", bound=Screen)

# The worksheet most app tests open (the ``bar`` fixture of conftest.py writes it): a clamped-free
# steel bar whose fundamental test_app.py compares with the handbook's (Blevins 1979, Table 8-1).
BAR = """\
format = 1
title = "test bar"   # comment kept on save

[member]
length = "1 m"
theory = "euler-bernoulli"   # the handbook's theory (Blevins' table): compared below
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3" }
section = { shape = "rectangle", width = "40 mm", depth = "8 mm" }

[supports]
left = "clamped"
right = "free"
"""


def sync(test: Callable[..., Coroutine[Any, Any, None]]) -> Callable[..., None]:
    """Run an async test on its own event loop (no pytest plugin needed)."""

    @functools.wraps(test)
    def wrapper(*args: Any, **kwargs: Any) -> None:
        asyncio.run(test(*args, **kwargs))

    return wrapper


async def settled(
    pilot: Pilot, app: BeamtoneApp, until: Callable[[], bool] = lambda: True
) -> ResultsView:
    """Wait until the workbench shows what it solved from exactly the document's contents.

    ``until`` is a further condition (say, that typed text has reached the document); it is
    checked again after each finished solve, because every change of the document ends in a
    solve. Raises AssertionError after ``TIMEOUT`` seconds (the app did not settle).
    """
    bench = app.workbench

    async def current() -> None:
        while True:
            await pilot.pause()  # flush: edits in flight reach the document and the workbench
            if until() and not bench.pending and bench.solved == app.document.plain():
                return
            bench.solve_finished.clear()
            await bench.solve_finished.wait()

    try:
        await asyncio.wait_for(current(), TIMEOUT)
    except TimeoutError:
        raise AssertionError(
            f"the app did not settle: pending={bench.pending}, solved the document's current "
            f"contents: {bench.solved == app.document.plain()}, condition met: {until()}"
        ) from None
    return bench.query_one(ResultsView)


async def on_top(pilot: Pilot, app: BeamtoneApp, kind: type[S]) -> S:
    """Wait until a screen of ``kind`` is the app's current screen; return it."""
    if not isinstance(app.screen, kind):
        arrived = asyncio.Event()

        def changed(screen: Screen) -> None:
            if isinstance(screen, kind):
                arrived.set()

        app.screen_change_signal.subscribe(app, changed, immediate=True)
        try:
            if not isinstance(app.screen, kind):
                await asyncio.wait_for(arrived.wait(), TIMEOUT)
        except TimeoutError:
            raise AssertionError(
                f"{kind.__name__} never came up; {app.screen!r} is on top"
            ) from None
        finally:
            app.screen_change_signal.unsubscribe(app)
    await pilot.pause()  # flush: the screen's widgets are mounted
    screen = app.screen
    assert isinstance(screen, kind)
    return screen


async def click(pilot: Pilot, widget: Widget) -> None:
    """Scroll ``widget`` into view and click it with the mouse.

    The press and the release go to the app as the terminal sends them, in one go; the app
    makes the click of them where both land on the same widget. The test fails where the
    widget is not the one under the pointer (hidden, cut off, covered). Returns once the
    app has taken the two events; what the click does is for the caller to wait for."""
    widget.scroll_visible(animate=False)
    await pilot.pause()  # flush: the scroll lands before the click
    app = pilot.app
    x, y = widget.region.offset
    assert (x, y) in app.screen.size.region, f"{widget!r} is outside the screen"
    under, _ = app.get_widget_at(x, y)
    assert under is widget, f"{widget!r} was not under the pointer ({under!r} was)"
    for kind in (events.MouseDown, events.MouseUp):
        app.post_message(kind(None, x, y, 0, 0, 1, False, False, False, x, y))
    await _handled(app)


async def _handled(app: BeamtoneApp) -> None:
    """Wait until the app has handled the messages posted to it so far (it runs a callback
    queued behind them)."""
    done = asyncio.Event()
    app.call_later(done.set)
    await asyncio.wait_for(done.wait(), TIMEOUT)


async def _until(
    node: Widget, attribute: str, condition: Callable[[], bool], what: str | Callable[[], str]
) -> None:
    """Wait until ``condition()`` holds, checked each time the reactive ``attribute`` of
    ``node`` changes (no polling)."""
    changed = asyncio.Event()
    node.app.watch(node, attribute, lambda _value: changed.set(), init=False)
    try:
        while not condition():
            changed.clear()
            await asyncio.wait_for(changed.wait(), TIMEOUT)
    except TimeoutError:
        raise AssertionError(what()) if callable(what) else AssertionError(what) from None


async def type_into(pilot: Pilot, field: Input, text: str) -> None:
    """Click ``field``, clear it and type ``text`` key by key.

    The keys go in one burst, as from a fast typist: each is a key event through the app, as
    from the terminal, and the test waits until the field holds ``text`` (it watches the
    field's value: no polling, no pause). ``pilot.press`` instead waits for the whole process
    to idle after every key, twice: tens of milliseconds a key, and up to a second while a
    solve runs in a worker.
    """
    await click(pilot, field)
    await _until(pilot.app.screen, "focused", lambda: field.has_focus,
                 f"{field!r} did not take the focus")  # fmt: skip
    app = pilot.app
    if field.value:
        # The end of the text, then delete to its start. These two are the field's key
        # bindings, which run once the key has bubbled up to the app: typing on before the
        # field is empty would type ahead of the deletion.
        for key in ("end", "ctrl+u"):
            app.post_message(events.Key(key, None))
        await _until(field, "value", lambda: field.value == "", f"{field!r} was not cleared")
    for character in text:
        app.post_message(events.Key(_character_to_key(character), character))
    await _until(
        field, "value", lambda: field.value == text,
        lambda: f"typed {text!r}, the field holds {field.value!r}",
    )  # fmt: skip


def field_of(app: BeamtoneApp, key: str) -> Input:
    """The workbench's input for a worksheet key path (``member.length``)."""
    for widget in app.workbench.query(".quantity, .text"):
        if getattr(widget, "key", None) == key:
            return widget.query_one(Input)
    raise LookupError(f"no field for {key}")


async def work_done(pilot: Pilot, app: BeamtoneApp) -> None:
    """Let a click's messages arrive, then wait for every worker it started to finish."""
    await pilot.pause()  # flush: the handler has started its worker
    await asyncio.wait_for(app.workers.wait_for_complete(), TIMEOUT)
    await pilot.pause()  # flush: what the worker handed back to the app is shown


async def press(pilot: Pilot, app: BeamtoneApp, selector: str) -> None:
    """Click a button of the current screen (scrolled into view first)."""
    await click(pilot, app.screen.query_one(selector, Button))


async def edit(pilot: Pilot, app: BeamtoneApp, key: str, text: str) -> ResultsView:
    """Type ``text`` into the field of ``key``; wait for the results of the edited worksheet."""
    await type_into(pilot, field_of(app, key), text)
    return await settled(pilot, app, until=lambda: app.document.get(key) == text)
