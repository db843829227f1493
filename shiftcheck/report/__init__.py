"""report stage of shiftcheck."""
