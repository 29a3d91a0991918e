"""Package list for setuptools: everything under src/ plus the top-level themes folder."""

from setuptools import find_packages, setup

setup(packages=find_packages("src") + ["kitleaf.themes"])
