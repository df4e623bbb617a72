"""The fitting core: plain numpy in, small dataclasses out. No files, no command line, no printing."""
