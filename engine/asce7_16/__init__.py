"""ASCE/SEI 7-16 Chapter 7 snow loads: one standard of neve's engine.

One module per provision family (``factors``, ``flat``, ``slope``,
``unbalanced``, ``drift``, ``sliding``, ``eaves``), the load cases
(``cases``), the orchestration (``analysis``), the declaration the standards
registry holds (``standard``) and the verification cases (``verification``).
Nothing outside this folder names its clauses; the rest of neve asks
:mod:`neve.engine.standards`.
"""

#: the standard's title, as every result and step reference names it
STANDARD = "ASCE 7-16"
