package reports

// Caution is printed with every table, written into every JSON and CSV
// output and on every page of a brief.
const Caution = "Advisory only: this is decision support from a model, not an instruction. " +
	"Statutory and safety inspections follow local regulation, and a competent or licensed " +
	"inspector's finding overrides this advice. Safety is not traded for cost: a state marked " +
	"unsafe requires action before further use."

// ModelLimits states what the model assumes; briefs and long reports print it.
const ModelLimits = "The model assumes that condition changes as a Markov chain with the same " +
	"transition probabilities every period, that inspections see the true condition, and that " +
	"the figures in the config describe the equipment; its answers are only as good as those data."
