import { queryOptions } from '@tanstack/react-query'
import type {
  FarmDetail,
  FarmsResponse,
  PlanVersionsResponse,
  PlanView,
  SessionResponse,
  SharedPlanResponse,
} from '../../shared/api-types.ts'
import { ApiError, apiFetch } from './client.ts'

const noRetryOn4xx = (count: number, error: unknown) => !(error instanceof ApiError && error.status >= 400 && error.status < 500) && count < 2

/** The signed-in user, or null when nobody is signed in. */
export const sessionQueryOptions = () =>
  queryOptions({
    queryKey: ['session'],
    queryFn: async ({ signal }) => {
      try {
        return await apiFetch<SessionResponse>('/api/session', { signal })
      } catch (error) {
        if (error instanceof ApiError && error.status === 401) return null
        throw error
      }
    },
    staleTime: 60_000,
    retry: noRetryOn4xx,
  })

export const farmsQueryOptions = () =>
  queryOptions({
    queryKey: ['farms'],
    queryFn: ({ signal }) => apiFetch<FarmsResponse>('/api/farms', { signal }),
    staleTime: 30_000,
    retry: noRetryOn4xx,
  })

export const farmQueryOptions = (code: string) =>
  queryOptions({
    queryKey: ['farm', code],
    queryFn: ({ signal }) => apiFetch<FarmDetail>(`/api/farms/${encodeURIComponent(code)}`, { signal }),
    staleTime: 30_000,
    retry: noRetryOn4xx,
  })

/** Plans never change once computed, so a loaded plan stays fresh. */
export const planQueryOptions = (id: string) =>
  queryOptions({
    queryKey: ['plan', id],
    queryFn: ({ signal }) => apiFetch<PlanView>(`/api/plans/${encodeURIComponent(id)}`, { signal }),
    staleTime: Infinity,
    retry: noRetryOn4xx,
  })

export const planVersionsQueryOptions = (id: string) =>
  queryOptions({
    queryKey: ['plan', id, 'versions'],
    queryFn: ({ signal }) => apiFetch<PlanVersionsResponse>(`/api/plans/${encodeURIComponent(id)}/versions`, { signal }),
    staleTime: 30_000,
    retry: noRetryOn4xx,
  })

export const sharedPlanQueryOptions = (token: string) =>
  queryOptions({
    queryKey: ['share', token],
    queryFn: ({ signal }) => apiFetch<SharedPlanResponse>(`/api/share/${encodeURIComponent(token)}`, { signal }),
    staleTime: Infinity,
    gcTime: 0,
    retry: noRetryOn4xx,
  })
