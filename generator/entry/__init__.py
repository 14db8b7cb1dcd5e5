"""Stage 1, load and validate: safe YAML, the entry format, the math grammar, the loader, the
catalog and an entry's content hash.
"""
