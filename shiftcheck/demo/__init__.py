"""Bundled INVENTED demo inputs used by ``shiftcheck demo``.

The files here (an NMR-STAR 3.1 shift list, five candidate models, planted.json) are copies of
the output of ``demo_data/make_demo.py``: an invented protein ("Kestrel-fold protein KfpA") from
an invented lab, with problems planted on purpose. See demo_data/README.md.
"""
