"""Analysis views beside the comparison, each with its Qt-free job or report helper."""
