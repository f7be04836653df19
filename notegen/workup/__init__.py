"""workup"""
