export { ScoringScreen as default } from '../../components/features/scoring/scoring-screen';
