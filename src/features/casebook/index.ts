// What the app layer composes from the casebook feature.
export { SimilarCases } from "./components/similar-cases";
export { ExpertCasebookRecordCard } from "./components/expert-record";
export { EntryView } from "./components/entry-view";
export { ModerationPanel } from "./components/moderation-panel";
export { ResultList, Pagination } from "./components/result-list";
export { FacetGroup, ActiveFilters } from "./components/facet-chips";
export { Snippet } from "./components/snippet";
export { snippetParts } from "./lib/snippet";
export * from "./api/paths";
