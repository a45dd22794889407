package pipelines

import "bandwright/pipelines/outdir"

type outdirDir = outdir.Dir

func outdirBegin(p string) (*outdir.Dir, error) { return outdir.Begin(p) }
