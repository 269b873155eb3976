"""Screens of the terminal application: the desk (main screen) and the key guide."""
