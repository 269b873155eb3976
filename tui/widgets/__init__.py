"""Widgets of the terminal application: call table, job form, findings panels, sketch."""
