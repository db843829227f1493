"""io stage of shiftcheck."""
