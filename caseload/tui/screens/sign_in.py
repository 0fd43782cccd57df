"""An OS account that no staff record knows yet: it waits for an admin to map it.

Nobody can take a staff record from here: records carry roles, and an account that could pick
one could become a supervisor and export identifiable data. The screen says what an admin runs
and checks again on `r`.
"""

from __future__ import annotations

from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Label, Static

from caseload.core.model import Actor
from caseload.presentation.safe_text import printable
from caseload.tui.clinic_work import STORE_WORK, ClinicWork
from caseload.tui.widgets.key_bar import KeyBar


class SignInScreen(ClinicWork, Screen):
    CSS_PATH = "sign_in.tcss"
    BINDINGS = [
        Binding("r", "check_again", "Check again", id="sign_in.check_again"),
        Binding("q", "app.quit", "Quit", id="sign_in.quit"),
    ]

    class Checked(Message):
        def __init__(self, actor: Actor | None) -> None:
            super().__init__()
            self.actor = actor

    def compose(self) -> ComposeResult:
        account = printable(self.app.clinic.identity.account)
        with Vertical(id="sign-in"):
            yield Label("Not linked to a staff record yet", classes="dialog-title")
            yield Static(Text(f"The OS account '{account}' is not linked to a staff record. An admin links it "
                              f"with 'caseload staff map STAFF {account}'; then press r."), id="how")
            yield Static("", id="outcome")
        yield KeyBar()

    def action_check_again(self) -> None:
        self._check()

    @work(**STORE_WORK, name="check")
    def _check(self) -> None:
        self.post_message(self.Checked(self.app.clinic.check_mapped()))

    def on_sign_in_screen_checked(self, message: Checked) -> None:
        if message.actor is None:
            self.query_one("#outcome", Static).update(Text("Still not linked: ask an admin.", style="bold"))
        else:
            self.app.signed_in()
