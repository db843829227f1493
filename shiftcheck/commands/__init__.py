"""commands stage of shiftcheck."""
