"""Photo and video evidence: content-addressed originals, derivatives, markers, integrity checks."""
