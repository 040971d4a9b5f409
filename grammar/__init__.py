"""Grammar files of the circuit description language (data, found through importlib.resources)."""
