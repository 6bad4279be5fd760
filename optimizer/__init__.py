"""The search: the encoded design space, the multi-objective loop, parallel evaluation, run folders."""
