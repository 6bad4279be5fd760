"""fluxfront: multi-objective design of boost-PFC inductors."""
__version__ = "0.1.0"
