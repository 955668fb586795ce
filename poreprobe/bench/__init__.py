"""The bench physics: capture radius from a diffusion-limited current, ions,
viscosity and diffusion, bath conductivity, series resistance, side split, and the
match of a scan against a measured capture radius. No structure reading here.
"""
