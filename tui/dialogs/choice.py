"""A question with a few answers, each on a button with its own key (no answer by colour)."""

from __future__ import annotations

from collections.abc import Sequence

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Static


class ChoiceDialog(ModalScreen[str]):
    """Ask ``question``; dismiss with the key of the chosen answer (``cancel`` on Escape).

    ``answers`` are (key, label) pairs; the first is the default button. Each answer can also
    be given by the first letter of its label, which is underlined in the label.
    """

    BINDINGS = [Binding("escape", "choose('cancel')", "Cancel", show=False)]

    DEFAULT_CSS = """
    ChoiceDialog { align: center middle; }
    ChoiceDialog > Vertical {
        width: 70; max-width: 95%; height: auto;
        border: thick $primary; background: $surface; padding: 1 2;
    }
    ChoiceDialog #question { height: auto; margin-bottom: 1; }
    ChoiceDialog Horizontal { height: auto; align-horizontal: right; }
    ChoiceDialog Button { margin-left: 1; min-width: 10; }
    """

    def __init__(self, title: str, question: str, answers: Sequence[tuple[str, str]]) -> None:
        super().__init__()
        self._title = title
        self._question = question
        self._answers = list(answers)
        self._letters = {label[0].lower(): key for key, label in self._answers}

    def compose(self) -> ComposeResult:
        with Vertical() as box:
            box.border_title = self._title
            yield Static(self._question, id="question")
            with Horizontal():
                for n, (key, label) in enumerate(self._answers):
                    yield Button(
                        f"[u]{label[0]}[/u]{label[1:]}",
                        id=f"answer-{key}",
                        variant="primary" if n == 0 else "default",
                    )

    def on_mount(self) -> None:
        self.query(Button).first().focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss((event.button.id or "answer-cancel").removeprefix("answer-"))

    def on_key(self, event) -> None:
        key = self._letters.get(event.key)
        if key is not None:
            event.stop()
            self.dismiss(key)

    def action_choose(self, key: str) -> None:
        self.dismiss(key)
