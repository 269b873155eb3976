"""Ask for a file name; never replace an existing file without asking."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Static

from .choice import ChoiceDialog


class FileNamePrompt(ModalScreen[Path | None]):
    """Prompt for a file name; dismiss with the chosen path, or ``None`` (Escape).

    When the file exists a second question asks whether to replace it; "no" returns to the
    prompt so another name can be typed. Names without one of ``suffixes`` are refused with
    a message naming the suffixes.
    """

    BINDINGS = [Binding("escape", "cancel", "Cancel", show=False)]

    DEFAULT_CSS = """
    FileNamePrompt { align: center middle; }
    FileNamePrompt > Vertical {
        width: 76; max-width: 95%; height: auto;
        border: thick $primary; background: $surface; padding: 1 2;
    }
    FileNamePrompt #prompt-message { height: auto; margin-top: 1; }
    """

    def __init__(
        self,
        title: str,
        suggestion: str,
        suffixes: tuple[str, ...],
        companions: Callable[[Path], list[Path]] | None = None,
        verb: str = "write",
    ) -> None:
        super().__init__()
        self._title = title
        self._suggestion = suggestion
        self._suffixes = suffixes
        self._companions = companions or (lambda path: [path])
        self._verb = verb
        #: True when the user agreed to replace files that exist.
        self.replace = False

    def compose(self) -> ComposeResult:
        with Vertical() as box:
            box.border_title = self._title
            yield Static(
                f"File name ({' or '.join(self._suffixes)}); Enter to {self._verb}, "
                "Escape to cancel."
            )
            yield Input(value=self._suggestion, id="prompt-input")
            yield Static("", id="prompt-message")

    def on_mount(self) -> None:
        self.query_one(Input).focus()

    def _say(self, text: str) -> None:
        self.query_one("#prompt-message", Static).update(text)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        text = event.value.strip()
        if not text:
            self._say("⚠ type a file name")
            return
        path = Path(text).expanduser()
        if path.suffix.lower() not in self._suffixes:
            self._say(f"⚠ the name must end in {' or '.join(self._suffixes)}")
            return
        if path.is_dir():
            self._say(f"⚠ {path} is a folder")
            return
        if not path.parent.exists():
            self._say(f"⚠ the folder {path.parent} does not exist")
            return
        existing = [p for p in self._companions(path) if p.exists()]
        if existing:
            names = ", ".join(str(p) for p in existing)
            verb = "exists" if len(existing) == 1 else "exist"

            def answered(answer: str | None) -> None:
                if answer == "replace":
                    self.replace = True
                    self.dismiss(path)
                else:
                    self._say(f"{names} kept; type another name.")

            self.app.push_screen(
                ChoiceDialog(
                    "File exists",
                    f"{names} {verb}. Replace?",
                    [("keep", "Keep it"), ("replace", "Replace")],
                ),
                answered,
            )
            return
        self.dismiss(path)

    def action_cancel(self) -> None:
        self.dismiss(None)
