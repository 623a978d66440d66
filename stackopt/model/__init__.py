"""Domain models: frozen, validated descriptions of stackups, circuits, cost tables and
scenarios. No files, no YAML, no pymoo: the ``inputs`` package reads files into these."""
