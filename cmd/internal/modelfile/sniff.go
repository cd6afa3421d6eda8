package modelfile

import "go.yaml.in/yaml/v3"

// Sniff recognises the kind of a file from its bytes without decoding it
// as a model: a class, system or fleet file by its top-level keys, a
// records or inventory CSV by its header, a settings file (any other
// YAML mapping), or an empty, binary or other file.
func Sniff(data []byte) Kind {
	k := sniffBytes(data)
	if k != OtherFile {
		return k
	}
	var root yaml.Node
	if err := yaml.Unmarshal(data, &root); err != nil || root.Kind != yaml.DocumentNode || len(root.Content) == 0 {
		return OtherFile
	}
	return sniffNode(root.Content[0])
}
