"""The published methods behind the registered quantities, as citations and BibTeX entries.

Each quantity's ``source`` names one entry here. Bibliographic details are
as the journals give them (typed from the papers' title pages); entries for
textbook definitions cite the standard reference a reader would use.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Reference:
    """One published method: a short citation for tables and a BibTeX entry."""

    key: str
    citation: str
    bibtex: str


def _article(key, authors, title, journal, year, volume, pages, citation):
    bibtex = (f"@article{{{key},\n  author = {{{authors}}},\n  title = {{{title}}},\n  journal = {{{journal}}},\n"
              f"  year = {{{year}}},\n  volume = {{{volume}}},\n  pages = {{{pages}}}\n}}")
    return Reference(key, citation, bibtex)


def _chapter(key, authors, title, book, editor, publisher, year, pages, citation):
    bibtex = (f"@incollection{{{key},\n  author = {{{authors}}},\n  title = {{{title}}},\n  booktitle = {{{book}}},\n"
              f"  editor = {{{editor}}},\n  publisher = {{{publisher}}},\n  year = {{{year}}},\n  pages = {{{pages}}}\n}}")
    return Reference(key, citation, bibtex)


def _book(key, authors, title, publisher, year, citation):
    bibtex = (f"@book{{{key},\n  author = {{{authors}}},\n  title = {{{title}}},\n  publisher = {{{publisher}}},\n"
              f"  year = {{{year}}}\n}}")
    return Reference(key, citation, bibtex)


_ENTRIES = [
    _book("murray_dermott1999", "Murray, C. D. and Dermott, S. F.", "Solar System Dynamics",
          "Cambridge University Press", 1999, "Murray & Dermott 1999"),
    _chapter("winn2010", "Winn, J. N.", "Transits and Occultations", "Exoplanets", "Seager, S.",
             "University of Arizona Press", 2010, "55-77", "Winn 2010"),
    _article("kopparapu2014", "Kopparapu, R. K. and Ramirez, R. M. and SchottelKotte, J. and Kasting, J. F. and "
             "Domagal-Goldman, S. and Eymet, V.", "Habitable Zones around Main-sequence Stars: Dependence on "
             "Planetary Mass", "The Astrophysical Journal Letters", 2014, 787, "L29", "Kopparapu et al. 2014"),
    _article("chen_kipping2017", "Chen, J. and Kipping, D.", "Probabilistic Forecasting of the Masses and Radii of "
             "Other Worlds", "The Astrophysical Journal", 2017, 834, "17", "Chen & Kipping 2017"),
    _article("kempton2018", "Kempton, E. M.-R. and others", "A Framework for Prioritizing the TESS Planetary "
             "Candidates Most Amenable to Atmospheric Characterization", "Publications of the Astronomical Society "
             "of the Pacific", 2018, 130, "114401", "Kempton et al. 2018"),
    _article("lithwick2012", "Lithwick, Y. and Xie, J. and Wu, Y.", "Extracting Planet Mass and Eccentricity from "
             "TTV Data", "The Astrophysical Journal", 2012, 761, "122", "Lithwick, Xie & Wu 2012"),
    _article("gladman1996", "Gladman, B. and Quinn, D. D. and Nicholson, P. and Rand, R.", "Synchronous Locking of "
             "Tidally Evolving Satellites", "Icarus", 1996, 122, "166-192", "Gladman et al. 1996"),
    _article("chambers1996", "Chambers, J. E. and Wetherill, G. W. and Boss, A. P.", "The Stability of "
             "Multi-Planet Systems", "Icarus", 1996, 119, "261-268", "Chambers et al. 1996"),
    _article("hamilton_burns1992", "Hamilton, D. P. and Burns, J. A.", "Orbital Stability Zones about Asteroids. "
             "II. The Destabilizing Effects of Eccentric Orbits and of Solar Radiation", "Icarus", 1992, 96,
             "43-64", "Hamilton & Burns 1992"),
    _article("williams_pollard2002", "Williams, D. M. and Pollard, D.", "Earth-like Worlds on Eccentric Orbits: "
             "Excursions beyond the Habitable Zone", "International Journal of Astrobiology", 2002, 1, "61-69",
             "Williams & Pollard 2002"),
    _article("mendez_rivera2017", "M\\'endez, A. and Rivera-Valent\\'in, E. G.", "The Equilibrium Temperature of "
             "Planets in Elliptical Orbits", "The Astrophysical Journal Letters", 2017, 837, "L1",
             "Méndez & Rivera-Valentín 2017"),
    _book("kepler_third_law", "Murray, C. D. and Dermott, S. F.", "Solar System Dynamics (Kepler's third law, "
          "eq. 2.26)", "Cambridge University Press", 1999, "Kepler's third law (Murray & Dermott 1999)"),
    _book("stefan_boltzmann", "Carroll, B. W. and Ostlie, D. A.", "An Introduction to Modern Astrophysics "
          "(Stefan-Boltzmann law)", "Cambridge University Press", 2017, "Stefan-Boltzmann law"),
    _book("equilibrium_temperature", "Seager, S.", "Exoplanet Atmospheres: Physical Processes (equilibrium "
          "temperature)", "Princeton University Press", 2010, "equilibrium temperature (Seager 2010)"),
    _book("rv_semi_amplitude", "Perryman, M.", "The Exoplanet Handbook (radial-velocity semi-amplitude)",
          "Cambridge University Press", 2018, "RV semi-amplitude (Perryman 2018)"),
    _article("zeng2016", "Zeng, L. and Sasselov, D. D. and Jacobsen, S. B.", "Mass-Radius Relation for Rocky "
             "Planets Based on PREM", "The Astrophysical Journal", 2016, 819, "127", "Zeng, Sasselov & Jacobsen 2016"),
    _article("lopez_fortney2014", "Lopez, E. D. and Fortney, J. J.", "Understanding the Mass-Radius Relation for "
             "Sub-Neptunes: Radius as a Proxy for Composition", "The Astrophysical Journal", 2014, 792, "1",
             "Lopez & Fortney 2014"),
    _article("jackson2008", "Jackson, B. and Greenberg, R. and Barnes, R.", "Tidal Heating of Extrasolar Planets",
             "The Astrophysical Journal", 2008, 681, "1631-1638", "Jackson, Greenberg & Barnes 2008"),
    _article("zahnle_catling2017", "Zahnle, K. J. and Catling, D. C.", "The Cosmic Shoreline: The Evidence that "
             "Escape Determines which Planets Have Atmospheres, and what this May Mean for Proxima Centauri B",
             "The Astrophysical Journal", 2017, 843, "122", "Zahnle & Catling 2017"),
    _article("erkaev2007", "Erkaev, N. V. and Kulikov, Yu. N. and Lammer, H. and Selsis, F. and Langmayr, D. and "
             "Jaritz, G. F. and Biernat, H. K.", "Roche Lobe Effects on the Atmospheric Loss from "
             "``Hot Jupiters''", "Astronomy and Astrophysics", 2007, 472, "329-334",
             "energy-limited escape (Watson et al. 1981; Erkaev et al. 2007)"),
    _article("koll2019", "Koll, D. D. B. and Malik, M. and Mansfield, M. and Kempton, E. M.-R. and Kite, E. and "
             "Abbot, D. and Bean, J. L.", "Identifying Candidate Atmospheres on Rocky M Dwarf Planets via Eclipse "
             "Photometry", "The Astrophysical Journal", 2019, 886, "140",
             "bare-rock eclipse depth (Cowan & Agol 2011; Koll et al. 2019)"),
    _book("scale_height", "Seager, S.", "Exoplanet Atmospheres: Physical Processes (pressure scale height)",
          "Princeton University Press", 2010, "scale height H = kT / (mu m_u g) (Seager 2010)"),
    _article("laskar_petit2017", "Laskar, J. and Petit, A. C.", "AMD-stability and the classification of planetary "
             "systems", "Astronomy & Astrophysics", 2017, 605, "A72", "Laskar & Petit 2017"),
    _article("petit_laskar_boue2017", "Petit, A. C. and Laskar, J. and Bou\\'e, G.", "AMD-stability in the presence "
             "of first-order mean motion resonances", "Astronomy & Astrophysics", 2017, 607, "A35",
             "Petit, Laskar & Boué 2017"),
    _article("gladman1993", "Gladman, B.", "Dynamics of Systems of Two Close Planets", "Icarus", 1993, 106,
             "247-263", "Gladman 1993"),
    _article("deck2013", "Deck, K. M. and Payne, M. and Holman, M. J.", "First-order Resonance Overlap and the "
             "Stability of Close Two-planet Systems", "The Astrophysical Journal", 2013, 774, "129",
             "Deck, Payne & Holman 2013"),
    _article("laplace_relation", "Lithwick, Y. and Wu, Y.", "Resonant Repulsion of Kepler Planet Pairs",
             "The Astrophysical Journal Letters", 2012, 756, "L11", "three-body (Laplace-type) relation"),
]

REFERENCES: dict[str, Reference] = {entry.key: entry for entry in _ENTRIES}


def references_of(keys) -> list[Reference]:
    """The references named by ``keys`` (each once, in a stable order); unknown keys raise KeyError."""
    return [REFERENCES[key] for key in sorted(set(keys))]
