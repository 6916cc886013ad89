"""A file picker: the folder tree without hidden files."""

from textual.widgets import DirectoryTree

__all__ = ["FileTree"]


class FileTree(DirectoryTree):
    """`DirectoryTree` that leaves out hidden files and folders (names starting with a dot)."""

    DEFAULT_CSS = """
    FileTree { border: round $primary-darken-2; }
    """

    def filter_paths(self, paths):
        return [p for p in paths if not p.name.startswith(".")]
