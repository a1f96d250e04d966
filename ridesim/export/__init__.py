"""Files for the shop and for programs.

Atomic writing and JSON (:mod:`.results`), cut files (:mod:`.drawings`).
"""
