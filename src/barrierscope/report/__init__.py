"""The HTML report (:mod:`.html`) and its figures (:mod:`.figures`)."""
