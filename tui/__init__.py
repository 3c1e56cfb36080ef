"""wheelwork's terminal interface: a thin Textual layer over :mod:`engine`."""
