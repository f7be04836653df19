"""knowledge"""
