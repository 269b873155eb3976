"""The demo traverse documents shipped with lodeline (invented places and names)."""
