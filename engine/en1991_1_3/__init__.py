"""EN 1991-1-3 (Eurocode 1, snow loads): the third standard of neve's engine.

SI units throughout: loads [kN/m2 = kPa], lengths [m], unit weights [kN/m3],
slopes [degrees].  One module per provision family: ``parameters`` (the
nationally determined parameters, as data), ``factors`` (Ce, Ct, the
exceptional ground load and the return-period adjustment of Annex D),
``shapes`` (the roof shape coefficients of Section 5.3), ``local`` (roofs
abutting taller construction and the local effects of Section 6),
``exceptional`` (the exceptional drifts of Annex B), the load cases
(``cases``), the orchestration (``analysis``), the declaration the standards
registry holds (``standard``) and the verification cases (``verification``).
Nothing outside this folder names its clauses; the rest of neve asks
:mod:`neve.engine.standards`.

Clause numbers and values are those of EN 1991-1-3:2003 with its
amendment A1:2015.  Where neve could check a value against a published
design guide's worked example ([SSB03]) the verification case names it;
the rest is marked "from memory" where it is stated.

References
----------
.. [EN] EN 1991-1-3:2003 + A1:2015, Eurocode 1: Actions on structures,
   Part 1-3: General actions, Snow loads.  CEN, Brussels.
.. [SSB03] Single-Storey Steel Buildings, Part 3: Actions, Appendix A,
   "Worked Example: Snow load applied on a single-storey building"
   (CTICM and SCI for the Steel Alliance, SECHALO project RFS2-CT-2008-0030,
   2009/2010).
"""

#: the standard's title, as every result and step reference names it
STANDARD = "EN 1991-1-3"
