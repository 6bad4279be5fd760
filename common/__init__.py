"""fluxfront: multi-objective design of boost-PFC inductors.

The package's rooms, each a folder of the repository, with dependencies pointing one way:

    fluxfront.models     physics (models/)
    fluxfront.catalog    data (catalog/)
    fluxfront.design     the design core: spec, design rows, evaluator (design/)
    fluxfront.optimizer  search (optimizer/)
    fluxfront.results    plots, build sheets, flux map, comparisons (results/)
    fluxfront.cli        the command line (cli/)

The folder common/ (this package, fluxfront itself) holds only what all of them share: the version, the input-error type and atomic writes.
"""
__version__ = "0.1.0"
