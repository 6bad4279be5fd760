"""fluxfront catalog: materials, core shapes, wires and costs, validated on load."""
from .loader import Catalog, CatalogError, MaterialArrays, Wire, catalog_from_snapshot, load_catalog

__all__ = ["Catalog", "CatalogError", "MaterialArrays", "Wire", "catalog_from_snapshot", "load_catalog"]
