/** Loads the fonts shipped with the app (no network): Inter 400/600 and IBM Plex Mono 400/500. */
import { useFonts } from 'expo-font';
import { Inter_400Regular } from '@expo-google-fonts/inter/400Regular';
import { Inter_600SemiBold } from '@expo-google-fonts/inter/600SemiBold';
import { IBMPlexMono_400Regular } from '@expo-google-fonts/ibm-plex-mono/400Regular';
import { IBMPlexMono_500Medium } from '@expo-google-fonts/ibm-plex-mono/500Medium';

/** Returns [loaded, error]; render nothing text-heavy until loaded (or error: system fonts then). */
export function useKeelsonFonts(): [boolean, Error | null] {
  return useFonts({ Inter_400Regular, Inter_600SemiBold, IBMPlexMono_400Regular, IBMPlexMono_500Medium });
}
