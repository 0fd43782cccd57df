"""First sign-in from an OS account that no staff record knows: take your own record.

Every active staff member is listed; records already signed to another account are shown greyed
and cannot be taken (an admin moves them).
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Footer, Label, OptionList, Static
from textual.widgets.option_list import Option

from caseload.tui.clinic_work import STORE_WORK, ClinicWork
from caseload.core.model import Actor, Staff
from caseload.tui.rich_text import literal


NAME_WIDTH = 20


def staff_option(staff: Staff) -> Option:
    text = Text(f"{staff.id:<12}", style="bold").append_text(literal(staff.name))
    text.pad_right(max(1, NAME_WIDTH - len(staff.name)))
    text.append(f"{staff.role.value:<11}", style="dim")
    if staff.os_account:
        text.append("taken: signed to another account", style="dim")
    return Option(text, id=staff.id, disabled=staff.os_account is not None)


class StaffList(OptionList):
    BINDINGS = [Binding("enter", "select", "Sign in as", id="sign_in.take")]


class SignInScreen(ClinicWork, Screen):
    CSS_PATH = "sign_in.tcss"
    AUTO_FOCUS = "StaffList"
    BINDINGS = [Binding("q", "app.quit", "Quit", id="sign_in.quit")]

    class Roster(Message):
        def __init__(self, staff: list[Staff]) -> None:
            super().__init__()
            self.staff = staff

    class Claimed(Message):
        def __init__(self, actor: Actor) -> None:
            super().__init__()
            self.actor = actor

    def compose(self) -> ComposeResult:
        with Vertical(id="sign-in"):
            yield Label("Who are you?", classes="dialog-title")
            account = self.app.clinic.identity.account
            yield Static(Text(f"The OS account '{account}' is not linked to a staff record yet. "
                              "Pick yours with the arrows and Enter; it is linked from then on."))
            yield StaffList(id="staff")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        self._roster()

    @work(**STORE_WORK, name="roster")
    def _roster(self) -> None:
        self.post_message(self.Roster(self.app.clinic.sign_in_roster()))

    @work(**STORE_WORK, name="claim")
    def _claim(self, staff_id: str) -> None:
        self.post_message(self.Claimed(self.app.clinic.claim(staff_id)))

    def on_sign_in_screen_roster(self, message: Roster) -> None:
        self.query_one(StaffList).set_options(staff_option(s) for s in message.staff)

    @on(OptionList.OptionSelected)
    def _chosen(self, event: OptionList.OptionSelected) -> None:
        self._claim(event.option.id)

    def on_sign_in_screen_claimed(self, message: Claimed) -> None:
        self.app.signed_in()
