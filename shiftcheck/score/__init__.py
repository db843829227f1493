"""score stage of shiftcheck."""
