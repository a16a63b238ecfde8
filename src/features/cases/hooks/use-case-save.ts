import { useEffect, useRef, useState, type BaseSyntheticEvent, type RefObject } from "react";
import type { UseFormReturn } from "react-hook-form";
import type { CaseDraft } from "../../../../shared/schemas/case";
import { formatTime } from "../../../../shared/format";
import { ApiError } from "../../../lib/api-client";
import { useCreateCase } from "../api/create-case";
import { useUpdateCase } from "../api/update-case";
import { splitServerErrors, type CaseFormValues } from "../lib/form-values";

export interface SaveBanner {
  tone: "error" | "ok";
  lines: string[];
}

/**
 * Saving the case form: the first save creates the draft, later ones patch it; the server's
 * field errors land on their fields. `saveRef` is filled with a save that uploads can await (it
 * resolves with the case's id; one save at a time, so two files dropped together make one draft).
 * Leaving the page with unsaved changes asks first.
 */
export function useCaseSave(opts: {
  form: UseFormReturn<CaseFormValues, unknown, CaseDraft>;
  caseId: string | null;
  onCreated?: (id: string) => void;
  saveRef?: RefObject<(() => Promise<string>) | null>;
}) {
  const { form, caseId, onCreated, saveRef } = opts;
  const { handleSubmit, formState, setError, reset, getValues } = form;
  const create = useCreateCase();
  const update = useUpdateCase();
  const [banner, setBanner] = useState<SaveBanner | null>(null);
  const [showSummary, setShowSummary] = useState(false);
  const idRef = useRef<string | null>(caseId);
  useEffect(() => {
    if (caseId) idRef.current = caseId;
  }, [caseId]);

  async function persist(draft: CaseDraft): Promise<string> {
    setBanner(null);
    try {
      let id = idRef.current;
      if (!id) {
        const created = await create.mutateAsync(draft);
        id = created.id;
        idRef.current = id;
        onCreated?.(id);
      } else {
        await update.mutateAsync({ id, patch: draft });
      }
      reset(getValues(), { keepValues: true });
      setShowSummary(false);
      setBanner({ tone: "ok", lines: [`Draft saved at ${formatTime(new Date())}.`] });
      return id;
    } catch (e) {
      if (e instanceof ApiError) {
        const { fields, other } = splitServerErrors(e);
        for (const f of fields) setError(f.path, { type: "server", message: f.message });
        if (fields.length) setShowSummary(true);
        setBanner({
          tone: "error",
          lines: other.length ? other : ["The server refused some fields; they are marked below."],
        });
      } else {
        setBanner({ tone: "error", lines: ["Could not save the draft. Check the connection and try again."] });
      }
      throw e;
    }
  }

  const onInvalid = () => {
    setShowSummary(true);
    setBanner({ tone: "error", lines: ["Fix the marked fields to save the draft."] });
  };

  const submit = (e?: BaseSyntheticEvent) =>
    handleSubmit((draft) => persist(draft).catch(() => undefined), onInvalid)(e);

  const inflight = useRef<Promise<string> | null>(null);
  // (set after each render, so it always sees this render's form state; callers use it on user actions)
  useEffect(() => {
    if (!saveRef) return;
    saveRef.current = () => {
      if (idRef.current && !formState.isDirty) return Promise.resolve(idRef.current);
      if (inflight.current) return inflight.current;
      const p = new Promise<string>((resolve, reject) => {
        const refused = () => reject(new Error("Save the draft first: the server refused it (see above)."));
        void handleSubmit(
          (draft) => persist(draft).then(resolve, refused),
          () => {
            onInvalid();
            reject(new Error("Save the draft first: fix the marked fields in the case form."));
          },
        )();
      }).finally(() => {
        inflight.current = null;
      });
      inflight.current = p;
      return p;
    };
  });

  // Warn before leaving with unsaved changes.
  useEffect(() => {
    if (!formState.isDirty) return;
    const h = (e: BeforeUnloadEvent) => e.preventDefault();
    window.addEventListener("beforeunload", h);
    return () => window.removeEventListener("beforeunload", h);
  }, [formState.isDirty]);

  return { submit, banner, showSummary, saving: create.isPending || update.isPending };
}
