"""Technology targets shipped with netfit (XML data, schema target.rng); found through importlib.resources."""
