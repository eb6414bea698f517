"""Formatting: text, LaTeX, MathML, JSON, design notes and plots. Only this layer builds words."""
