"""fluxfront catalog: materials, core shapes, wires and costs, validated on load."""
from .loader import Catalog, CatalogError, MaterialArrays, Wire, load_catalog
from .snapshot import catalog_from_snapshot

__all__ = ["Catalog", "CatalogError", "MaterialArrays", "Wire", "catalog_from_snapshot", "load_catalog"]
