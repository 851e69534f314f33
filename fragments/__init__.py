"""Fragment library: data files (TOML), one fragment per table, each with its source.

Shipped inside the installed package as ``elucidate.fragments``; read it with
``importlib.resources.files("elucidate.fragments")``.
"""
