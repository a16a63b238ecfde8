import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { ExpertCasebookRecord } from "../../../../shared/schemas/casebook";
import { casebookKeys, casebookPaths } from "./paths";

export const getExpertRecord = (expertId: string) =>
  api.get<ExpertCasebookRecord>(casebookPaths.expertRecord(expertId));

export const expertRecordQuery = (expertId: string) =>
  queryOptions({ queryKey: casebookKeys.expertRecord(expertId), queryFn: () => getExpertRecord(expertId) });

export const useExpertRecord = (expertId: string | undefined) =>
  useQuery({ ...expertRecordQuery(expertId ?? ""), enabled: !!expertId });
