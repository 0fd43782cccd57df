"""The application: one factory, `make_app`, used by the command line and by the tests.

Every call to the Clinic runs in a Textual thread worker (`@work`) of the screen that asks; its result
comes back as a typed Message, and a failure becomes a one-line notification (never a traceback).
Saves run in the app's `save` worker; `Saved` then updates the changed row and tells every screen.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from textual import events, work
from textual.app import App
from textual.binding import Binding
from textual.reactive import reactive
from textual.widgets import Input

from caseload.application.caseload_view import CaseloadLine
from caseload.application.clinic import Clinic
from caseload.application.entries import Logged
from caseload.core.model import Patient, Role, Severity
from caseload.presentation.glossary import not_used
from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.help import HelpScreen, key_lines, screen_name
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.sign_in import SignInScreen
from caseload.tui.themes import DEFAULT_THEME, THEMES
from caseload.tui.clinic_work import STORE_WORK, ClinicWork, Saved, StoreChanged
from caseload.tui.widgets.type_ahead import as_typed, replay

REFRESH_SECONDS = 5.0
NO_COLOUR_TONES = {Severity.URGENT: "bold reverse", Severity.TODAY: "bold", Severity.SOON: "", Severity.INFO: "dim"}


class CaseloadApp(ClinicWork, App):
    """The caseload interface over one Clinic: one store, one staff member, one day."""

    TITLE = "caseload"
    CSS_PATH = ["app.tcss", "widgets/widgets.tcss"]
    BINDINGS = [
        # A priority binding, so the keys typed straight after it already go to the quick log; it
        # stands aside (check_action) wherever text is being typed.
        Binding("l", "quick_log", "Log", id="app.quick_log", priority=True),
        # Out of the footer, which must fit 80 columns; the help lists it (as every key left out).
        Binding("q", "quit", "Quit", id="app.quit", show=False),
        # Not a priority: in a text field `?` is typed as text, and F1 opens the help there.
        Binding("question_mark,f1", "help", "Help", id="app.help"),
    ]

    roster: reactive[tuple[CaseloadLine, ...]] = reactive(())
    """The caseload as last read, in triage order; screens and the quick log read it."""
    roster_read: reactive[bool] = reactive(False)
    """Whether the caseload has been read once: an empty roster then means no patients."""
    mine: reactive[bool] = reactive(False)
    """Whether the list and the header counts are limited to the acting nurse's patients."""

    def __init__(self, clinic: Clinic, refresh_seconds: float = REFRESH_SECONDS, notice: str | None = None):
        super().__init__()
        self.clinic = clinic
        self.refresh_seconds = refresh_seconds
        self.notice = notice  # one line from the command that opened the interface, shown on opening

    async def on_event(self, event: events.Event) -> None:
        if isinstance(event, events.Key) and event.key == "ctrl+j" and not event.is_forwarded:
            # Keys typed while the program starts reach a terminal still in line mode, which turns
            # each Enter into a newline (ctrl+j): it is the Enter that was typed.
            enter = events.Key("enter", "\r")
            enter.set_sender(self)
            event = enter
        await super().on_event(event)

    def on_mount(self) -> None:
        for theme in THEMES:
            self.register_theme(theme)
        self.theme = DEFAULT_THEME
        if not self.clinic.signed_in:
            self.push_screen(SignInScreen())
        else:
            self.open_home()
        if self.notice:
            self.notify(self.notice, markup=False, timeout=10)

    def open_home(self) -> None:
        self.mine = self.clinic.actor.role is Role.NURSE
        self.push_screen(CaseloadScreen())

    def signed_in(self) -> None:
        self.pop_screen()
        self.open_home()

    # --- what the screens share

    def tone(self, severity: Severity) -> str:
        """A Rich style for a severity, from the current theme (so it reads in dark and light). Under
        NO_COLOR the theme's colours turn to greys, some dimmer than plain text: "urgent" is then
        reversed and "today" bold, so both still stand out."""
        if self.no_color:
            return NO_COLOUR_TONES[severity]
        colours = self.theme_variables
        return {
            Severity.URGENT: f"bold {colours['error']}",
            Severity.TODAY: f"bold {colours['warning']}",
            Severity.SOON: colours["secondary"],
            Severity.INFO: "dim",
        }[severity]

    @work(**STORE_WORK, name="save")
    def save(self, call: Callable[..., Any], *args, summary: Callable[[Any], str | None]) -> None:
        """Run a writing Clinic call; when done the app gets `Saved` with `summary(result)`."""
        result = call(*args)
        self.post_message(Saved(summary(result), result))

    @work(**STORE_WORK, name="check")
    def check_store(self) -> None:
        """The quick check the first save would pay, run once the first list is drawn, on a connection
        of its own: a damaged store is said at once, before anyone types a call, and the list stays
        free to read meanwhile. A damaged store fails this worker, and ClinicWork says so."""
        self.clinic.refuse_damaged()

    def on_saved(self, message: Saved) -> None:
        if message.summary:
            self.notify(message.summary, markup=False)
        row_updated = isinstance(message.result, Logged)
        if row_updated:
            self.roster = self.clinic.list_after(self.roster, message.result)
        for screen in self.screen_stack:
            screen.post_message(StoreChanged(row_updated))

    def registered(self, patient: Patient, summary: str, typed_on: list[events.Key]) -> None:
        """A patient just registered is on the list at once, under its cursor, so that the keys typed
        after registering her (`l` and her call) are hers; when the filters hide her they are not used."""
        self.notify(summary, markup=False)
        self.roster = self.clinic.list_after_registering(self.roster, patient)
        for screen in self.screen_stack:
            screen.post_message(StoreChanged(True))
        if isinstance(self.screen, CaseloadScreen) and self.screen.show_patient(patient.id):
            replay(self, typed_on)
        elif typed_on:
            self.notify(f"{patient.id} is not in the list as filtered. {not_used(as_typed(typed_on))}",
                        markup=False, severity="warning")

    # --- actions

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "quick_log":
            typing = isinstance(self.focused, Input) or self.screen.is_modal
            return not typing and self.clinic.may("entry.log")
        return True

    def action_help(self) -> None:
        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen(screen_name(self.screen), key_lines(self)))

    def action_quick_log(self) -> None:
        patient_id = getattr(self.screen, "patient_id", None)
        self.push_screen(QuickLogScreen(patient_id, settled=getattr(self.screen, "patient_settled", False)))


def make_app(clinic: Clinic, refresh_seconds: float = REFRESH_SECONDS, notice: str | None = None) -> CaseloadApp:
    """The interface over `clinic`; an OS account mapped to no one gets the sign-in screen first."""
    return CaseloadApp(clinic, refresh_seconds, notice)
