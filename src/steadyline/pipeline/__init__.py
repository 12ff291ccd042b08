"""The build pipeline: find the projects, load and analyse each one's data, have the site layer
compose its pages, and publish the whole site at once (or report the problems, for `check`).

It sits above every other layer: it reads files (config, loading), computes (analysis), asks
:mod:`steadyline.site` for pages and writes the output. Nothing below imports it.
"""
