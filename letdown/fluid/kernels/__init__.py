"""The optional compiled flash kernels (plain C, loaded with ctypes) and their driver; numpy is the
fallback."""
