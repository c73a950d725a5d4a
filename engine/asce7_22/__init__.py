"""ASCE/SEI 7-22 Chapter 7 snow loads: the second standard of neve's engine.

One module per provision family (``factors``, ``flat``, ``slope``,
``unbalanced``, ``drift``, ``sliding``, ``eaves``), the load cases
(``cases``), the orchestration (``analysis``), the declaration the standards
registry holds (``standard``) and the verification cases (``verification``),
laid out as :mod:`neve.engine.asce7_16` is.  Nothing outside this folder names
its clauses; the rest of neve asks :mod:`neve.engine.standards`.

What changes from ASCE 7-16 (each module says where its values come from):
ground snow loads are strength-level and risk-targeted, one map per risk
category, so the snow importance factor is gone (pf = 0.7 Ce Ct pg); the
heated-roof thermal factor depends on the roof's R-value and pg; drift
heights take the winter wind parameter W2; the minimum load has an upper
limit per risk category; rain-on-snow is 8 psf; and the share of the snow
load counted in the seismic weight changed (Sec. 12.7.2).

Secondary sources consulted (titles and addresses also beside each value):

* [NFBA25] "ASCE 7-16 vs. ASCE 7-22 snow load", Frame Building News (NFBA),
  September 2025, https://associationdatabase.co/NFBA/September2025/inc/html/25.html
  and .../26.html
* [TDEG] TDEG News, "ASCE 7-22 thermal factor",
  https://myemail.constantcontact.com/TDEG-News.html?soid=1110058619239&aid=ujNxaGbXegA
* [PROSE] "ASCE 7-22 snow load changes",
  https://prose-eng.com/resources/asce-7-22-snow-load-changes
* [SKA] M. Crandall, "Snow drift loads: ASCE 7-16 vs 7-22", SK&A,
  https://skaengineers.com/insights/snow-drift-loadsasce-7-16-vs-7-22
* [STR-CAN] "Current Canadian and U.S. approaches to snow drift loads",
  STRUCTURE magazine, https://www.structuremag.org/?p=26509
* [STR-MIN] "ASCE 7-22 flat roof snow load versus minimum snow load",
  STRUCTURE magazine,
  https://www.structuremag.org/article/asce-7-22-flat-roof-snow-load-versus-minimum-snow-load/
* [STR-GSL] "Ground snow loads for ASCE 7-22: what has changed and why?",
  STRUCTURE magazine, February 2022, https://www.structuremag.org/?p=19724
"""

#: the standard's title, as every result and step reference names it
STANDARD = "ASCE 7-22"
