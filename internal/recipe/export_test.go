package recipe

// Names the external tests of the package check against other packages.
const (
	VariantsDirName = variantsDirName
	StoreDirName    = storeDirName
)
