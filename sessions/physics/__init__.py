"""Physics of a board carrying a rider: water, buoyancy, planing, waves and speed regimes.

Pure functions in SI units, one module per physical concern. Each function cites the
source of its equation and of its default coefficients; the tests check every module
against published or independent values (see ``docs/physics.md``).

Modules
-------
water
    Density of sea and fresh water from temperature and salinity (TEOS-10, via ``gsw``).
buoyancy
    Archimedes: buoyant force, flotation mass, submerged fraction, lifted share.
regimes
    Froude numbers, the "hull speed" rule and the displacement / pre-planing / planing bands.
planing
    Savitsky's (1964) planing lift equation and the planing-onset speed band built on it.
waves
    Shallow-water celerity, breaker indices and the smallest breaking wave for a speed.
"""
