"""Modal dialogs of the terminal application (questions with a result)."""
