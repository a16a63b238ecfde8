// One policy per resource. Routes and socket handlers call `<resource>Policy.authorize(actor, action, record)`
// (404 for another tenant's record, 403 for the wrong role) and put `abilities(actor, record)` in responses.
export * from "./policy";
export * from "./shops";
export * from "./users";
export * from "./experts";
