"""predict stage of shiftcheck."""
