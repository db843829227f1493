"""structure stage of shiftcheck."""
