"""Build of the compiled flash kernels; all project metadata lives in pyproject.toml.

``letdown/fluid/kernels/_flashkernels.c`` is plain C (libm only). It is built as an extension
module so that ``pip install`` compiles it; letdown loads its functions with ctypes
(``letdown.fluid.kernels.native``) and falls back to numpy when the module is missing. A failed compilation does not fail the install.
"""
import hashlib
from pathlib import Path

from setuptools import Extension, setup
from setuptools.command.build_ext import build_ext

#: The C source; its SHA-256 is compiled in, so that letdown can tell a library built from another
#: version of the file (a stale build) and fall back to numpy rather than run old code.
KERNELS = "letdown/fluid/kernels/_flashkernels.c"
KERNELS_SHA256 = hashlib.sha256((Path(__file__).parent / KERNELS).read_bytes()).hexdigest()


class OptionalBuildExt(build_ext):
    """Build the kernels if a C compiler works; otherwise warn and install without them."""

    def run(self):
        try:
            super().run()
        except Exception as exc:  # noqa: BLE001 - any compiler failure means "no kernels"
            self.warn(f"letdown: flash kernels not compiled ({exc}); numpy will be used")

    def build_extension(self, ext):
        if self.compiler.compiler_type == "unix":
            # -O3 vectorises the mixing-rule loops; -fno-math-errno lets sqrt be inlined; neither
            # changes a result (no reassociation of sums)
            ext.extra_compile_args = ["-O3", "-fno-math-errno"]
            ext.libraries = ["m"]
        try:
            super().build_extension(ext)
        except Exception as exc:  # noqa: BLE001
            self.warn(f"letdown: flash kernels not compiled ({exc}); numpy will be used")


setup(
    ext_modules=[
        Extension(
            "letdown.fluid.kernels._flashkernels",
            sources=[KERNELS],
            define_macros=[("LETDOWN_WITH_PYTHON_MODULE", "1"),
                           ("LETDOWN_SOURCE_SHA256", f'"{KERNELS_SHA256}"')],
        )
    ],
    cmdclass={"build_ext": OptionalBuildExt},
)
