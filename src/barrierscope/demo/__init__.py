"""The bundled demo: an invented reaction family and library (see :mod:`.scenario`), and the
job that runs the whole of barrierscope on it (:mod:`.run`)."""
