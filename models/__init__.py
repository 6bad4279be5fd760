"""Physics: small, pure, vectorized model functions over numpy arrays, one module per domain.

Imports nothing else of fluxfront."""
