"""Stage 4, site: the data of every page, typesetting, plots, downloads, citations and writing the
files.
"""
