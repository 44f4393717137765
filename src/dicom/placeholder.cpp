// placeholder so the module library is never empty; remove when the module has sources
