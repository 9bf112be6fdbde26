"""Motion over time: Kepler orbits, positions, the sky from a planet, transit forecasts at a site."""
