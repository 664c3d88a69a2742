"""Part catalogs shipped with netfit (XML data, schema catalog.rng); found through importlib.resources."""
