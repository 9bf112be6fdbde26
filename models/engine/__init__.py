"""The derivation engine: inputs as arrays, the registry of quantities, Monte Carlo draws, derive()."""
