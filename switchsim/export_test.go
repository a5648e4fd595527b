package switchsim

// PhysFastPath lets the external tests switch physical mode's one-node fast
// path off, to compare it with the general path.
var PhysFastPath = &physFastPath
