# error 0:0: the file holds no circuit
# Only comments: nothing to analyse.
