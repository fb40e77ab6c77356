/** TanStack Query hook for the methods page; the text changes only with a new server version. */
import { useQuery } from '@tanstack/react-query';
import { getMethodsMarkdown } from '../api/docs';

export const docKeys = { methods: ['docs', 'methods'] as const };

export const useMethodsDoc = () => useQuery({ queryKey: docKeys.methods, queryFn: ({ signal }) => getMethodsMarkdown(signal), staleTime: 60 * 60_000 });
