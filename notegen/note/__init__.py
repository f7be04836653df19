"""note"""
