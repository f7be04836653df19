"""acidbase"""
