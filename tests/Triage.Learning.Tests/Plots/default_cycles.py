#!/usr/bin/python3
"""Prints the widely used default categorical colour cycles that PlotPaletteTests.cs compares against.

Run with Debian 12's python3-matplotlib (3.6.3): /usr/bin/python3 default_cycles.py
tab10 is matplotlib's default property cycle, the same ten colours as D3's category10;
tab20 is its 20-colour companion (D3's category20).
"""
import matplotlib
import matplotlib.colors as mc

print("matplotlib", matplotlib.__version__)
print("tab10", [mc.to_hex(c) for c in matplotlib.colormaps["tab10"].colors])
print("tab20", [mc.to_hex(c) for c in matplotlib.colormaps["tab20"].colors])
print("default cycle", matplotlib.rcParams["axes.prop_cycle"].by_key()["color"])
