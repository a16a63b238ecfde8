import { useQueryClient } from "@tanstack/react-query";
import { useCallback } from "react";
import { upload } from "../../../lib/api-client";
import { caseKeys, casePaths } from "./paths";
import type { CasePhoto } from "./types";

/** POST /api/cases/:id/photos, multipart field `file`, with upload progress (0–1). */
export function uploadPhoto(caseId: string, file: File, onProgress?: (f: number) => void, signal?: AbortSignal) {
  const form = new FormData();
  form.append("file", file, file.name);
  return upload<CasePhoto>(casePaths.photos(caseId), form, onProgress, signal);
}

/** uploadPhoto, refreshing the case afterwards. */
export function useUploadPhoto() {
  const qc = useQueryClient();
  return useCallback(
    async (caseId: string, file: File, onProgress?: (f: number) => void, signal?: AbortSignal) => {
      const photo = await uploadPhoto(caseId, file, onProgress, signal);
      await qc.invalidateQueries({ queryKey: caseKeys.detail(caseId) });
      return photo;
    },
    [qc],
  );
}
