"""Reports: a plain document built from the results (:mod:`.document`), rendered as text (rich),
JSON or Markdown. Reports never compute physics; they arrange and format figures."""
