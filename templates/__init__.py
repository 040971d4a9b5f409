"""Built-in jinja2 templates of notes and sheets (data, found through importlib.resources)."""
