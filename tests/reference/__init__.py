"""Reference implementations used only by the tests (not part of stackopt)."""
