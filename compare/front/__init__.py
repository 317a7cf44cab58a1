"""The front: the command line (:mod:`.cli` and :mod:`.commands`) and the
Python API (:mod:`.api`, re-exported by the package ``magcheck``)."""
