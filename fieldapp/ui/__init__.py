"""The Kivy tablet app (the only package that imports Kivy)."""
