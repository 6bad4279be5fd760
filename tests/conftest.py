"""Shared fixtures: the built-in catalog, the demo spec and its prepared evaluation context."""
import pytest

from fluxfront.catalog import load_catalog
from fluxfront.design.evaluator import prepare
from fluxfront.design.spec import demo_spec_path, load_spec


@pytest.fixture(scope="session")
def catalog():
    return load_catalog()


@pytest.fixture(scope="session")
def demo_spec():
    return load_spec(demo_spec_path())[0]


@pytest.fixture(scope="session")
def demo_context(demo_spec, catalog):
    return prepare(demo_spec, catalog)
